"use client";

import Link from "next/link";
import { DatabaseUnavailable } from "./unavailable";

/** What a 404 says, wherever it is shown (inside the app's layout, or on its own). */
export function NotFoundContent() {
  return (
    <div className="mx-auto max-w-lg py-8" data-testid="not-found">
      <p className="font-mono text-sm text-muted">404</p>
      <h1 className="mt-1 mb-2 text-xl font-semibold">Nothing here</h1>
      <p className="mb-4 text-sm text-muted">This page does not exist, or it belongs to a team you are not a member of.</p>
      <Link href="/teams" className="text-action hover:underline">
        Go to your teams
      </Link>
    </div>
  );
}

// AppError carries a digest such as "holonomy:unavailable:database" that
// survives the production build's message scrubbing.
export function ErrorContent({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  if (error.digest === "holonomy:unavailable:database") return <DatabaseUnavailable onRetry={reset} />;
  return (
    <div className="mx-auto max-w-lg py-8" data-testid="error-page">
      <p className="font-mono text-sm text-danger">Error</p>
      <h1 className="mt-1 mb-2 text-xl font-semibold">Something went wrong on our side</h1>
      <p className="mb-4 text-sm text-muted">The problem has been logged{error.digest ? ` (reference ${error.digest})` : ""}. Try again.</p>
      <button type="button" onClick={reset} className="rounded border border-action bg-action px-3 py-1.5 text-sm font-medium text-action-ink">
        Try again
      </button>
    </div>
  );
}
