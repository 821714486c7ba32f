import { safetyNote } from "@/lib/domain";

export function SiteFooter() {
  return (
    <footer className="mt-16 border-t border-line bg-surface/70 print:hidden">
      <div className="mx-auto flex max-w-6xl flex-col gap-2 px-6 py-4 text-xs text-muted sm:flex-row sm:items-start sm:justify-between">
        <p className="max-w-3xl" data-testid="safety-note">
          <span className="font-semibold text-seal">Safety note.</span> {safetyNote}
        </p>
        <p className="shrink-0">
          Press <kbd>?</kbd> for shortcuts
        </p>
      </div>
    </footer>
  );
}
