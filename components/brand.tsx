import Link from "next/link";

/** The Holonomy mark: a closed path on a grid, drawn inline. */
export function Brand({ href = "/" }: { href?: string }) {
  return (
    <Link href={href} className="inline-flex items-center gap-2 font-semibold tracking-tight text-ink">
      <svg width="22" height="22" viewBox="0 0 22 22" aria-hidden className="text-action">
        <rect x="1" y="1" width="20" height="20" rx="2" fill="none" stroke="currentColor" strokeOpacity="0.35" />
        <path d="M5 15 C 5 6, 17 6, 17 11 S 9 17, 11 11" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" />
        <circle cx="11" cy="11" r="1.6" fill="var(--seal)" />
      </svg>
      <span>Holonomy</span>
    </Link>
  );
}
