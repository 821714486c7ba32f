"use client";

import { useEffect, useState } from "react";

type Theme = "light" | "dark";

function currentTheme(): Theme {
  const chosen = document.documentElement.dataset.theme;
  if (chosen === "dark" || chosen === "light") return chosen;
  return window.matchMedia("(prefers-color-scheme: dark)").matches ? "dark" : "light";
}

export function toggleTheme(): void {
  const next: Theme = currentTheme() === "dark" ? "light" : "dark";
  document.documentElement.dataset.theme = next;
  try {
    localStorage.setItem("holonomy-theme", next);
  } catch {
    // Private mode: the choice lasts for this page only.
  }
  window.dispatchEvent(new Event("holonomy-theme"));
}

export function ThemeToggle() {
  const [theme, setTheme] = useState<Theme | null>(null);
  useEffect(() => {
    const update = () => setTheme(currentTheme());
    update();
    window.addEventListener("holonomy-theme", update);
    return () => window.removeEventListener("holonomy-theme", update);
  }, []);
  return (
    <button
      type="button"
      onClick={toggleTheme}
      className="rounded border border-transparent px-2 py-1 text-sm text-muted hover:border-line hover:text-ink"
      aria-label={theme === "dark" ? "Switch to light theme" : "Switch to dark theme"}
      title="Switch theme (Alt+Shift+T)"
    >
      {theme === "dark" ? "Light" : "Dark"}
    </button>
  );
}
