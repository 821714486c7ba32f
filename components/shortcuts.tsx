"use client";

import { useRouter } from "next/navigation";
import { createContext, useCallback, useContext, useEffect, useMemo, useRef, useState, type ReactNode } from "react";
import { Dialog } from "./ui/dialog";
import { toggleTheme } from "./theme-toggle";

export interface Shortcut {
  /** One key ("n", "?", "/") or a two-key sequence ("g t"). */
  keys: string;
  description: string;
  run: () => void;
}

interface ShortcutsContext {
  register: (shortcut: Shortcut) => () => void;
  openHelp: () => void;
}

const Context = createContext<ShortcutsContext | null>(null);

function isTyping(target: EventTarget | null): boolean {
  const element = target as HTMLElement | null;
  if (!element) return false;
  return element.isContentEditable || ["INPUT", "TEXTAREA", "SELECT"].includes(element.tagName);
}

export function ShortcutsProvider({ children }: { children: ReactNode }) {
  const router = useRouter();
  const [helpOpen, setHelpOpen] = useState(false);
  const [registered, setRegistered] = useState<Shortcut[]>([]);
  const pendingPrefix = useRef<{ key: string; at: number } | null>(null);

  const globals = useMemo<Shortcut[]>(
    () => [
      { keys: "?", description: "Show this list of shortcuts", run: () => setHelpOpen(true) },
      { keys: "g t", description: "Go to your teams", run: () => router.push("/teams") },
      { keys: "g m", description: "Open the development mailbox (demo and development only)", run: () => router.push("/dev/mailbox") },
      { keys: "t", description: "Switch between light and dark theme", run: toggleTheme },
    ],
    [router],
  );

  const register = useCallback((shortcut: Shortcut) => {
    setRegistered((current) => [...current.filter((s) => s.keys !== shortcut.keys), shortcut]);
    return () => setRegistered((current) => current.filter((s) => s !== shortcut));
  }, []);

  const all = useMemo(() => [...globals, ...registered], [globals, registered]);

  useEffect(() => {
    function onKeyDown(event: KeyboardEvent) {
      if (event.metaKey || event.ctrlKey || event.altKey || isTyping(event.target)) return;
      if (document.querySelector("dialog[open]") && event.key !== "?") return;
      const key = event.key;
      const prefix = pendingPrefix.current;
      if (prefix && Date.now() - prefix.at < 1200) {
        pendingPrefix.current = null;
        const match = all.find((s) => s.keys === `${prefix.key} ${key}`);
        if (match) {
          event.preventDefault();
          match.run();
          return;
        }
      }
      if (all.some((s) => s.keys.startsWith(`${key} `))) {
        pendingPrefix.current = { key, at: Date.now() };
        return;
      }
      const match = all.find((s) => s.keys === key);
      if (match) {
        event.preventDefault();
        match.run();
      }
    }
    window.addEventListener("keydown", onKeyDown);
    return () => window.removeEventListener("keydown", onKeyDown);
  }, [all]);

  const value = useMemo(() => ({ register, openHelp: () => setHelpOpen(true) }), [register]);

  return (
    <Context.Provider value={value}>
      {children}
      <Dialog open={helpOpen} onClose={() => setHelpOpen(false)} title="Keyboard shortcuts">
        <table className="w-full text-sm" data-testid="shortcut-list">
          <tbody>
            {all.map((shortcut) => (
              <tr key={shortcut.keys} className="border-b border-line last:border-0">
                <td className="w-24 py-1.5 pr-3 align-top">
                  {shortcut.keys.split(" ").map((part, index) => (
                    <span key={index}>
                      {index > 0 ? <span className="mx-1 text-muted">then</span> : null}
                      <kbd>{part}</kbd>
                    </span>
                  ))}
                </td>
                <td className="py-1.5">{shortcut.description}</td>
              </tr>
            ))}
            <tr>
              <td className="py-1.5 pr-3">
                <kbd>Esc</kbd>
              </td>
              <td className="py-1.5">Close a dialog</td>
            </tr>
          </tbody>
        </table>
      </Dialog>
    </Context.Provider>
  );
}

/** Registers a page-level shortcut while the calling component is mounted. */
export function useShortcut(keys: string, description: string, run: () => void, enabled = true): void {
  const context = useContext(Context);
  const runRef = useRef(run);
  useEffect(() => {
    runRef.current = run;
  }, [run]);
  useEffect(() => {
    if (!context || !enabled) return;
    return context.register({ keys, description, run: () => runRef.current() });
  }, [context, keys, description, enabled]);
}

export function useOpenShortcutHelp(): () => void {
  return useContext(Context)?.openHelp ?? (() => undefined);
}
