"use client";

import { DatabaseUnavailable } from "@/components/unavailable";

// AppError carries a digest such as "holonomy:unavailable:database" that
// survives the production build's message scrubbing.
export default function ErrorPage({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  if (error.digest === "holonomy:unavailable:database") {
    return (
      <main className="px-6 py-16">
        <DatabaseUnavailable onRetry={reset} />
      </main>
    );
  }
  return (
    <main className="mx-auto max-w-lg px-6 py-16">
      <p className="font-mono text-sm text-danger">Error</p>
      <h1 className="mt-1 mb-2 text-xl font-semibold">Something went wrong on our side</h1>
      <p className="mb-4 text-sm text-muted">The problem has been logged{error.digest ? ` (reference ${error.digest})` : ""}. Try again.</p>
      <button type="button" onClick={reset} className="rounded border border-action bg-action px-3 py-1.5 text-sm font-medium text-action-ink">
        Try again
      </button>
    </main>
  );
}
