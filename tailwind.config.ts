import type { Config } from "tailwindcss";

// Colours are CSS variables (app/globals.css) so light and dark themes share
// one set of utility names: paper, surface, ink, action (teal), seal (brass), danger.
const config: Config = {
  content: ["./app/**/*.{ts,tsx}", "./components/**/*.{ts,tsx}"],
  theme: {
    extend: {
      colors: {
        paper: "var(--paper)",
        surface: "var(--surface)",
        sunken: "var(--sunken)",
        ink: "var(--ink)",
        muted: "var(--muted)",
        line: "var(--line)",
        action: { DEFAULT: "var(--action)", strong: "var(--action-strong)", soft: "var(--action-soft)", ink: "var(--action-ink)" },
        seal: { DEFAULT: "var(--seal)", soft: "var(--seal-soft)" },
        danger: { DEFAULT: "var(--danger)", soft: "var(--danger-soft)" },
        review: { DEFAULT: "var(--review)", soft: "var(--review-soft)" },
      },
      fontFamily: {
        sans: ["var(--font-plex-sans)", "system-ui", "sans-serif"],
        mono: ["var(--font-plex-mono)", "ui-monospace", "monospace"],
      },
      borderRadius: { DEFAULT: "3px" },
    },
  },
};

export default config;
