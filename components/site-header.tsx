import Link from "next/link";
import { Brand } from "./brand";
import { HelpButton } from "./help-button";
import { NotificationsMenu } from "./notifications/notifications-menu";
import { SignOutButton } from "./sign-out-button";
import { TeamSwitcher, type TeamOption } from "./team-switcher";
import { ThemeToggle } from "./theme-toggle";

export function SiteHeader({ user, teams, showMailbox }: { user: { name: string; email: string }; teams: TeamOption[]; showMailbox: boolean }) {
  return (
    <header className="border-b border-line bg-surface/90 backdrop-blur print:hidden">
      <div className="mx-auto flex max-w-6xl flex-wrap items-center gap-x-4 gap-y-2 px-6 py-2.5">
        <Brand href="/teams" />
        <TeamSwitcher teams={teams} />
        <nav className="ml-auto flex items-center gap-1">
          {showMailbox ? (
            <Link href="/dev/mailbox" className="rounded px-2 py-1 text-sm text-muted hover:bg-sunken hover:text-ink">
              Mailbox
            </Link>
          ) : null}
          <NotificationsMenu />
          <ThemeToggle />
          <HelpButton />
          <span className="hidden px-2 text-sm text-muted sm:inline" data-testid="signed-in-user" title={user.email}>
            {user.name}
          </span>
          <SignOutButton />
        </nav>
      </div>
    </header>
  );
}
