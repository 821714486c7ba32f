import Link from "next/link";

/** Shown when PostgreSQL cannot be reached. */
export function DatabaseUnavailable({ onRetry }: { onRetry?: () => void }) {
  return (
    <div className="mx-auto max-w-lg rounded border border-danger/50 bg-surface p-6" data-testid="unavailable">
      <p className="font-mono text-sm text-danger">503 · Service unavailable</p>
      <h1 className="mt-1 mb-2 text-xl font-semibold">The database is not reachable</h1>
      <p className="mb-4 text-sm text-muted">
        Holonomy cannot reach its database right now, so nothing can be shown or saved. Your work already saved is safe. Try again in a moment; if this
        persists, the person running this installation should check that PostgreSQL is started (npm run db:start).
      </p>
      <div className="flex gap-3">
        {onRetry ? (
          <button type="button" onClick={onRetry} className="rounded border border-action bg-action px-3 py-1.5 text-sm font-medium text-action-ink">
            Try again
          </button>
        ) : null}
        <Link href="/" className="rounded border border-line px-3 py-1.5 text-sm">
          Home
        </Link>
      </div>
    </div>
  );
}
