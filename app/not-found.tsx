import { NotFoundContent } from "@/components/page-problems";
import { PublicHeader } from "@/components/public-header";
import { SiteFooter } from "@/components/site-footer";
import { SiteHeader } from "@/components/site-header";
import { getTeamsByUserId } from "@/db/queries/teams";
import { getSessionUser } from "@/lib/auth/session";
import { devMailboxAvailable } from "@/lib/dev-mailbox";

/** Who is signed in, with their teams; null for a visitor, and also when the database is down. */
async function signedIn() {
  try {
    const user = await getSessionUser();
    if (!user) return null;
    const teams = await getTeamsByUserId({ userId: user.id });
    return { user, teams: teams.map(({ id, name, role }) => ({ id, name, role })), showMailbox: await devMailboxAvailable() };
  } catch {
    return null;
  }
}

/** The site header for whoever is looking: the signed-in one, or the public one. */
async function Header() {
  const viewer = await signedIn();
  return viewer ? <SiteHeader user={viewer.user} teams={viewer.teams} showMailbox={viewer.showMailbox} /> : <PublicHeader />;
}

// An address no route matches.
export default async function NotFound() {
  return (
    <div className="flex min-h-screen flex-col">
      <Header />
      <main id="main" tabIndex={-1} className="mx-auto w-full max-w-6xl flex-1 px-6 py-8">
        <NotFoundContent />
      </main>
      <SiteFooter />
    </div>
  );
}
