"use client";

/**
 * Who has this derivation open: one round badge per person, in their
 * collaboration colour, with their initials (the name on hover and for
 * screen readers). This person comes first, marked "you".
 */
import type { Peer } from "./shared-session";

function initials(name: string): string {
  const words = name.trim().split(/\s+/).filter(Boolean);
  const letters = words.length > 1 ? words[0]![0]! + words[words.length - 1]![0]! : (words[0] ?? "?").slice(0, 2);
  return letters.toUpperCase();
}

const SHOWN = 6;

export function PresenceAvatars({ peers }: { peers: readonly Peer[] }) {
  if (peers.length === 0) return null;
  const shown = peers.slice(0, SHOWN);
  const more = peers.length - shown.length;
  const names = peers.map((peer) => (peer.self ? `${peer.name} (you)` : peer.name));
  return (
    <div className="flex items-center" role="group" aria-label={`Viewing now: ${names.join(", ")}`} data-testid="presence">
      <ul className="flex -space-x-1.5">
        {shown.map((peer) => (
          <li
            key={peer.id}
            className="flex h-7 w-7 items-center justify-center rounded-full border-2 border-paper text-[11px] font-semibold text-white"
            style={{ backgroundColor: peer.colour }}
            title={peer.self ? `${peer.name} (you)` : peer.name}
            data-testid="presence-avatar"
            data-name={peer.name}
            data-self={peer.self || undefined}
          >
            <span aria-hidden>{initials(peer.name)}</span>
          </li>
        ))}
      </ul>
      {more > 0 ? <span className="ml-2 text-xs text-muted">+{more}</span> : null}
    </div>
  );
}
