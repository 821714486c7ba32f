"use client";

/**
 * Leaving the page while the server has not stored every edit: a link within
 * the app waits briefly for the edits, then asks; closing or reloading the tab
 * gets the browser's own question. Nothing is asked once everything is stored.
 */
import { useRouter } from "next/navigation";
import { useEffect, useRef } from "react";

export interface LeaveGuardOptions {
  /** Edits of this person the server has not stored yet. */
  pending: number;
  /** Resolves true once they are stored, false after the wait. */
  whenStored: (timeoutMs: number) => Promise<boolean>;
  /** How long a click on a link waits for the edits before asking. */
  waitMs?: number;
  confirm?: (message: string) => boolean;
}

export function leaveQuestion(pending: number): string {
  return `${pending === 1 ? "1 edit has" : `${pending} edits have`} not reached the server yet and would be lost. Leave this page anyway?`;
}

/** The in-app address a click would go to, or null when the click is not a plain same-origin navigation. */
export function internalTarget(event: MouseEvent, location: Location): string | null {
  if (event.defaultPrevented || event.button !== 0 || event.metaKey || event.ctrlKey || event.shiftKey || event.altKey) return null;
  const anchor = (event.target as Element | null)?.closest?.("a[href]") as HTMLAnchorElement | null;
  if (!anchor || anchor.hasAttribute("download") || (anchor.target && anchor.target !== "_self")) return null;
  const url = new URL(anchor.href, location.href);
  if (url.origin !== location.origin) return null;
  // A jump within this page is no departure.
  if (url.pathname === location.pathname && url.search === location.search) return null;
  return url.pathname + url.search + url.hash;
}

/** The page's guard while one is mounted; programmatic navigation (menus, shortcuts) asks it first. */
let activeGuard: (() => Promise<boolean>) | null = null;

/**
 * Whether the app may navigate away now: true at once when nothing is unstored,
 * else after the edits are stored or the person agrees to leave. Call before a
 * `router.push` that leaves the current page.
 */
export function mayLeave(): Promise<boolean> {
  return activeGuard ? activeGuard() : Promise.resolve(true);
}

export function useLeaveGuard(options: LeaveGuardOptions): void {
  const router = useRouter();
  const latest = useRef(options);
  useEffect(() => {
    latest.current = options;
  });

  useEffect(() => {
    function onBeforeUnload(event: BeforeUnloadEvent) {
      if (latest.current.pending > 0) event.preventDefault();
    }
    let leaving = false;
    function onClick(event: MouseEvent) {
      if (latest.current.pending === 0 || leaving) return;
      const target = internalTarget(event, window.location);
      if (!target) return;
      // Capture phase: the link's own handler (Next's client navigation) sees the click as handled.
      event.preventDefault();
      event.stopPropagation();
      leaving = true;
      void guard().then((leave) => {
        leaving = false;
        if (leave) router.push(target);
      });
    }
    async function guard(): Promise<boolean> {
      const { pending, whenStored, waitMs = 2_000, confirm = (message: string) => window.confirm(message) } = latest.current;
      if (pending === 0) return true;
      return (await whenStored(waitMs)) || confirm(leaveQuestion(latest.current.pending));
    }
    activeGuard = guard;
    window.addEventListener("beforeunload", onBeforeUnload);
    document.addEventListener("click", onClick, true);
    return () => {
      if (activeGuard === guard) activeGuard = null;
      window.removeEventListener("beforeunload", onBeforeUnload);
      document.removeEventListener("click", onClick, true);
    };
  }, [router]);
}
