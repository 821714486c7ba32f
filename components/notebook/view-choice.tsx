"use client";

/**
 * Beside a view choice (equation form, equilibrium, code language) that differs
 * from the document's setting: says so, offers the document's again, and lets
 * someone who may edit make their choice the document's default for everyone.
 */
export function ViewChoiceNote({ documentLabel, onReset, onMakeDefault }: { documentLabel: string; onReset?: () => void; onMakeDefault?: () => void }) {
  return (
    <span className="flex flex-wrap items-center gap-x-2 text-xs text-muted" data-testid="view-choice-note">
      <span>Your view; the document&apos;s is {documentLabel}.</span>
      {onReset ? (
        <button type="button" className="text-action hover:underline" onClick={onReset}>
          Show the document&apos;s
        </button>
      ) : null}
      {onMakeDefault ? (
        <button type="button" className="text-action hover:underline" onClick={onMakeDefault}>
          Make yours the document&apos;s
        </button>
      ) : null}
    </span>
  );
}
