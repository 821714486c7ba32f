"use client";

import { signOut } from "next-auth/react";

export function SignOutButton() {
  return (
    <button type="button" onClick={() => signOut({ callbackUrl: "/sign-in" })} className="rounded px-2 py-1 text-sm text-muted hover:bg-sunken hover:text-ink">
      Sign out
    </button>
  );
}
