"use client";

import { useCallback, useMemo, useRef } from "react";

/** A random UUID, also where crypto.randomUUID is missing (pages served over plain http to another host). */
function randomKey(): string {
  if (typeof crypto.randomUUID === "function") return crypto.randomUUID();
  const bytes = crypto.getRandomValues(new Uint8Array(16));
  bytes[6] = (bytes[6]! & 0x0f) | 0x40;
  bytes[8] = (bytes[8]! & 0x3f) | 0x80;
  const hex = Array.from(bytes, (b) => b.toString(16).padStart(2, "0")).join("");
  return `${hex.slice(0, 8)}-${hex.slice(8, 12)}-${hex.slice(12, 16)}-${hex.slice(16, 20)}-${hex.slice(20)}`;
}

/**
 * The Idempotency-Key for a create request: the same key for every repeat of
 * the same input (a double click, a retry after a lost answer), a new one as
 * soon as the input changes, and a new one after `reset()` (call it once the
 * request succeeded, so creating the same thing again on purpose works).
 */
export function useIdempotencyKey(): { keyFor: (input: string) => string; reset: () => void } {
  const last = useRef<{ input: string; key: string } | null>(null);
  const keyFor = useCallback((input: string) => {
    if (last.current?.input !== input) last.current = { input, key: randomKey() };
    return last.current.key;
  }, []);
  const reset = useCallback(() => {
    last.current = null;
  }, []);
  return useMemo(() => ({ keyFor, reset }), [keyFor, reset]);
}
