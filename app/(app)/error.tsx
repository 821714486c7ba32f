"use client";

import { ErrorContent } from "@/components/page-problems";

// Rendered inside the app's layout, so the site header (teams, sign-out) stays.
export default function AppErrorPage({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return <ErrorContent error={error} reset={reset} />;
}
