import type { ReactNode } from "react";
import { Brand } from "@/components/brand";
import { HelpButton } from "@/components/help-button";
import { SiteFooter } from "@/components/site-footer";
import { ThemeToggle } from "@/components/theme-toggle";

export default function AuthLayout({ children }: { children: ReactNode }) {
  return (
    <div className="flex min-h-screen flex-col">
      <header className="mx-auto flex w-full max-w-6xl items-center justify-between px-6 py-4">
        <Brand />
        <div className="flex items-center gap-1">
          <ThemeToggle />
          <HelpButton />
        </div>
      </header>
      <main className="flex flex-1 items-start justify-center px-4 pt-10">
        <div className="w-full max-w-md rounded border border-line bg-surface p-7 shadow-[0_1px_0_var(--line)]">{children}</div>
      </main>
      <SiteFooter />
    </div>
  );
}
