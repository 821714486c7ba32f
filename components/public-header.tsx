import { Brand } from "./brand";
import { HelpButton } from "./help-button";
import { ThemeToggle } from "./theme-toggle";

/** The header of pages seen without signing in (sign-in, invitations) and of error pages outside the app. */
export function PublicHeader() {
  return (
    <header className="mx-auto flex w-full max-w-6xl items-center justify-between px-6 py-4">
      <Brand />
      <div className="flex items-center gap-1">
        <ThemeToggle />
        <HelpButton />
      </div>
    </header>
  );
}
