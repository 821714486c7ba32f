import type { ReactNode } from "react";
import { PublicHeader } from "@/components/public-header";
import { SiteFooter } from "@/components/site-footer";

export default function AuthLayout({ children }: { children: ReactNode }) {
  return (
    <div className="flex min-h-screen flex-col">
      <PublicHeader />
      <main id="main" tabIndex={-1} className="flex flex-1 items-start justify-center px-4 pt-10">
        <div className="w-full max-w-md rounded border border-line bg-surface p-7 shadow-[0_1px_0_var(--line)]">{children}</div>
      </main>
      <SiteFooter />
    </div>
  );
}
