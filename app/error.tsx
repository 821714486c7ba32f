"use client";

import { ErrorContent } from "@/components/page-problems";
import { PublicHeader } from "@/components/public-header";
import { SiteFooter } from "@/components/site-footer";

// Errors outside the signed-in area, or in its layout itself (the database is down): the layout's
// header may be what failed, so this page brings the public one. Errors inside the app's pages are
// caught by app/(app)/error.tsx, under the full site header.
export default function ErrorPage({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <div className="flex min-h-screen flex-col">
      <PublicHeader />
      <main id="main" tabIndex={-1} className="w-full flex-1 px-6 py-8">
        <ErrorContent error={error} reset={reset} />
      </main>
      <SiteFooter />
    </div>
  );
}
