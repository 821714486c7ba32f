"use client";

import { useRouter } from "next/navigation";
import { mayLeave } from "@/components/collab/use-leave-guard";
import { createContext, useCallback, useContext, useEffect, useMemo, useRef, useState, type ReactNode } from "react";
import { Dialog } from "./ui/dialog";
import { toggleTheme } from "./theme-toggle";

export interface Shortcut {
  /**
   * One key ("n", "?", "/"), a two-key sequence ("g t"), or a chord with
   * modifiers ("Alt+Shift+X"). Single keys and sequences act only while no
   * control has the focus; chords act anywhere outside a dialog.
   */
  keys: string;
  description: string;
  /** Absent for entries that only list a key handled elsewhere (a cell, an editor). */
  run?: () => void;
}

interface ShortcutsContext {
  register: (shortcut: Shortcut) => () => void;
  openHelp: () => void;
}

const Context = createContext<ShortcutsContext | null>(null);

/**
 * Elements where a key press belongs to the element: typing in a field, or
 * activating a button or link (Space, Enter). A single-key shortcut must never
 * fire there: a description typed while focus sat on "+ Add parameter" would
 * otherwise download files or switch the theme.
 */
const INTERACTIVE = [
  "input",
  "textarea",
  "select",
  "button",
  "a[href]",
  "summary",
  "audio[controls]",
  "video[controls]",
  "[contenteditable]:not([contenteditable='false'])",
  ".cm-editor",
  "[role=textbox]",
  "[role=button]",
  "[role=combobox]",
  "[role=listbox]",
  "[role=menu]",
  "[role=menuitem]",
  "[role=option]",
  "[role=slider]",
  "[role=spinbutton]",
  "[role=tab]",
  "[role=checkbox]",
  "[role=radio]",
  "[role=switch]",
].join(",");

/** True when a key press on `target` belongs to a control rather than to the page. */
export function isControlTarget(target: EventTarget | null): boolean {
  if (!target || typeof (target as Element).closest !== "function") return false;
  const element = target as HTMLElement;
  return element.isContentEditable || element.closest(INTERACTIVE) !== null;
}

interface Chord {
  key: string;
  alt: boolean;
  ctrl: boolean;
  meta: boolean;
  shift: boolean;
}

/** "Alt+Shift+X" as a chord; null for single keys and sequences. */
export function parseChord(keys: string): Chord | null {
  const parts = keys.split("+");
  if (parts.length < 2 || parts.some((part) => part === "")) return null;
  const key = parts.pop()!;
  const modifiers = new Set(parts.map((part) => part.toLowerCase()));
  return { key: key.toLowerCase(), alt: modifiers.has("alt"), ctrl: modifiers.has("ctrl"), meta: modifiers.has("meta"), shift: modifiers.has("shift") };
}

/** The letter or digit of a key press, independent of the layout's Alt or Shift characters. */
function pressedKey(event: KeyboardEvent): string {
  const code = /^(?:Key([A-Z])|Digit(\d))$/.exec(event.code ?? "");
  if (code) return (code[1] ?? code[2]!).toLowerCase();
  return event.key.toLowerCase();
}

function matchesChord(chord: Chord, event: KeyboardEvent): boolean {
  return (
    chord.alt === event.altKey &&
    chord.ctrl === event.ctrlKey &&
    chord.meta === event.metaKey &&
    chord.shift === event.shiftKey &&
    chord.key === pressedKey(event)
  );
}

export function ShortcutsProvider({ children }: { children: ReactNode }) {
  const router = useRouter();
  const [helpOpen, setHelpOpen] = useState(false);
  const [registered, setRegistered] = useState<Shortcut[]>([]);
  const pendingPrefix = useRef<{ key: string; at: number } | null>(null);

  const globals = useMemo<Shortcut[]>(
    () => [
      { keys: "?", description: "Show this list of shortcuts", run: () => setHelpOpen(true) },
      { keys: "g t", description: "Go to your teams", run: () => void mayLeave().then((leave) => leave && router.push("/teams")) },
      {
        keys: "g m",
        description: "Open the development mailbox (demo and development only)",
        run: () => void mayLeave().then((leave) => leave && router.push("/dev/mailbox")),
      },
      // Changes the whole screen: a chord, so a stray key press cannot do it.
      { keys: "Alt+Shift+T", description: "Switch between light and dark theme", run: toggleTheme },
    ],
    [router],
  );

  const register = useCallback((shortcut: Shortcut) => {
    setRegistered((current) => [...current.filter((s) => s.keys !== shortcut.keys), shortcut]);
    return () => setRegistered((current) => current.filter((s) => s !== shortcut));
  }, []);

  const all = useMemo(() => [...globals, ...registered], [globals, registered]);

  useEffect(() => {
    const chords = all.flatMap((shortcut) => {
      const chord = parseChord(shortcut.keys);
      return chord && shortcut.run ? [{ chord, run: shortcut.run }] : [];
    });
    const plain = all.filter((shortcut) => shortcut.run && parseChord(shortcut.keys) === null);

    function onKeyDown(event: KeyboardEvent) {
      if (event.defaultPrevented || event.isComposing) return;
      const dialogOpen = document.querySelector("dialog[open]") !== null;
      if (event.altKey || event.ctrlKey || event.metaKey) {
        if (dialogOpen) return;
        const match = chords.find(({ chord }) => matchesChord(chord, event));
        if (match) {
          event.preventDefault();
          match.run();
        }
        return;
      }
      if (isControlTarget(event.target)) return;
      if (dialogOpen && event.key !== "?") return;
      const key = event.key;
      const prefix = pendingPrefix.current;
      if (prefix && Date.now() - prefix.at < 1200) {
        pendingPrefix.current = null;
        const match = plain.find((s) => s.keys === `${prefix.key} ${key}`);
        if (match) {
          event.preventDefault();
          match.run!();
          return;
        }
      }
      if (plain.some((s) => s.keys.startsWith(`${key} `))) {
        pendingPrefix.current = { key, at: Date.now() };
        return;
      }
      const match = plain.find((s) => s.keys === key);
      if (match) {
        event.preventDefault();
        match.run!();
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
        <p className="mb-2 text-xs text-muted">Single keys act when no field or button has the focus; press Esc, or click an empty part of the page, first.</p>
        <table className="w-full text-sm" data-testid="shortcut-list">
          <tbody>
            {all.map((shortcut) => (
              <tr key={shortcut.keys} className="border-b border-line last:border-0">
                <td className="w-40 py-1.5 pr-3 align-top whitespace-nowrap">
                  <ShortcutKeys keys={shortcut.keys} />
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

function ShortcutKeys({ keys }: { keys: string }) {
  if (parseChord(keys)) {
    return (
      <>
        {keys.split("+").map((part, index) => (
          <span key={index}>
            {index > 0 ? <span className="mx-0.5 text-muted">+</span> : null}
            <kbd>{part}</kbd>
          </span>
        ))}
      </>
    );
  }
  return (
    <>
      {keys.split(" ").map((part, index) => (
        <span key={index}>
          {index > 0 ? <span className="mx-1 text-muted">then</span> : null}
          <kbd>{part}</kbd>
        </span>
      ))}
    </>
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

/** Lists a key that something else handles (a cell, an editor) in the help dialog, without acting on it. */
export function useShortcutHelp(keys: string, description: string, enabled = true): void {
  const context = useContext(Context);
  useEffect(() => {
    if (!context || !enabled) return;
    return context.register({ keys, description });
  }, [context, keys, description, enabled]);
}

export function useOpenShortcutHelp(): () => void {
  return useContext(Context)?.openHelp ?? (() => undefined);
}
