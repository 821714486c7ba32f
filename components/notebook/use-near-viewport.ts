"use client";

import { useEffect, useState, type RefObject } from "react";

/**
 * Whether an element is on screen or close to it. Notebooks with long chains
 * hold dozens of editors and equations; building them only as they come near
 * the viewport keeps the first render fast. Once true it stays true, unless
 * `sticky` is false: then it turns false again when the element moves away
 * (a shared editor listens to everyone's cursors, so only those on screen
 * should exist). Where IntersectionObserver is missing (tests, old browsers)
 * it is true at once.
 */
export function useNearViewport(ref: RefObject<Element | null>, rootMargin = "400px", { sticky = true }: { sticky?: boolean } = {}): boolean {
  const [near, setNear] = useState(false);
  useEffect(() => {
    if (near && sticky) return;
    const element = ref.current;
    if (!element || typeof IntersectionObserver === "undefined") {
      setNear(true);
      return;
    }
    const observer = new IntersectionObserver(
      (entries) => {
        const intersecting = entries.some((entry) => entry.isIntersecting);
        if (intersecting && sticky) observer.disconnect();
        if (intersecting || !sticky) setNear(intersecting);
      },
      { rootMargin },
    );
    observer.observe(element);
    return () => observer.disconnect();
  }, [near, ref, rootMargin, sticky]);
  return near;
}
