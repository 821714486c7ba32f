import Link from "next/link";

export default function NotFound() {
  return (
    <main className="mx-auto max-w-lg px-6 py-16" data-testid="not-found">
      <p className="font-mono text-sm text-muted">404</p>
      <h1 className="mt-1 mb-2 text-xl font-semibold">Nothing here</h1>
      <p className="mb-4 text-sm text-muted">This page does not exist, or it belongs to a team you are not a member of.</p>
      <Link href="/teams" className="text-action hover:underline">
        Go to your teams
      </Link>
    </main>
  );
}
