import { headers } from "next/headers";
import type { ReactNode } from "react";
import { SiteFooter } from "@/components/site-footer";
import { SiteHeader } from "@/components/site-header";
import { getTeamsByUserId } from "@/db/queries/teams";
import { requirePageUser } from "@/lib/auth/session";
import { devMailboxAvailable } from "@/lib/dev-mailbox";

export const dynamic = "force-dynamic";

export default async function AppLayout({ children }: { children: ReactNode }) {
  const path = (await headers()).get("x-holonomy-path") ?? "/teams";
  const user = await requirePageUser(path);
  const teams = await getTeamsByUserId({ userId: user.id });
  return (
    <div className="flex min-h-screen flex-col">
      <SiteHeader user={user} teams={teams.map(({ id, name, role }) => ({ id, name, role }))} showMailbox={await devMailboxAvailable()} />
      <main id="main" tabIndex={-1} className="mx-auto w-full min-w-0 max-w-6xl flex-1 px-4 py-6 sm:px-6 sm:py-8">
        {children}
      </main>
      <SiteFooter />
    </div>
  );
}
