"use client";

import { useEffect, useState, type RefObject } from "react";

/**
 * Whether an element is on screen or close to it. Notebooks with long chains
 * hold dozens of editors and equations; building them only as they come near
 * the viewport keeps the first render fast. Once true it stays true. Where
 * IntersectionObserver is missing (tests, old browsers) it is true at once.
 */
export function useNearViewport(ref: RefObject<Element | null>, rootMargin = "400px"): boolean {
  const [near, setNear] = useState(false);
  useEffect(() => {
    if (near) return;
    const element = ref.current;
    if (!element || typeof IntersectionObserver === "undefined") {
      setNear(true);
      return;
    }
    const observer = new IntersectionObserver(
      (entries) => {
        if (entries.some((entry) => entry.isIntersecting)) {
          setNear(true);
          observer.disconnect();
        }
      },
      { rootMargin },
    );
    observer.observe(element);
    return () => observer.disconnect();
  }, [near, ref, rootMargin]);
  return near;
}
