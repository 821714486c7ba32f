import Link from "next/link";
import type { DocumentIssue } from "@/lib/notebook/document";
import { Notice } from "../ui/notice";

export interface UnreadableContentProps {
  derivationId: string;
  teamId: string;
  teamName: string;
  title: string;
  issues: DocumentIssue[];
  /** Set when a newer Holonomy wrote the document. */
  newerVersion?: number;
  /** What the recovered model file leaves out. */
  omitted: string[];
}

/** At most this many issues are listed; the first ones locate the problem. */
const SHOWN_ISSUES = 20;

/**
 * Shown instead of the notebook when the stored content cannot be read: what
 * is wrong, by path, and the model file recovered from what can be read. The
 * notebook is not opened, so nothing overwrites the stored content.
 */
export function UnreadableContent({ derivationId, teamId, teamName, title, issues, newerVersion, omitted }: UnreadableContentProps) {
  return (
    <article className="max-w-3xl space-y-4" data-testid="unreadable-content">
      <header className="space-y-2">
        <Link href={`/teams/${teamId}`} className="text-sm text-action hover:underline">
          ← {teamName}
        </Link>
        <h1 className="text-2xl font-semibold">{title}</h1>
      </header>
      <Notice tone="error">
        {newerVersion !== undefined
          ? `This derivation was saved by a newer version of Holonomy (document schema ${newerVersion}). It opens again once this installation is updated.`
          : "The stored notebook of this derivation cannot be read, so it is not opened; nothing has been changed."}
      </Notice>
      <section className="space-y-2">
        <h2 className="text-lg font-semibold">What is wrong</h2>
        <ul className="list-disc space-y-1 pl-5 text-sm" data-testid="unreadable-issues">
          {issues.slice(0, SHOWN_ISSUES).map((issue, index) => (
            <li key={index}>
              {issue.path ? <code className="rounded bg-sunken px-1">{issue.path}</code> : "The document"}: {issue.message}
            </li>
          ))}
        </ul>
        {issues.length > SHOWN_ISSUES ? <p className="text-sm text-muted">and {issues.length - SHOWN_ISSUES} more.</p> : null}
      </section>
      <section className="space-y-2">
        <h2 className="text-lg font-semibold">Recover the model</h2>
        <p className="text-sm">
          The model file holds the coordinates, parameters, inputs, definitions, energies and forces that could be read. Import it as a new derivation to carry
          on working.
        </p>
        <a
          href={`/api/derivations/${derivationId}/recovered-model`}
          download
          className="inline-block rounded border border-line bg-surface px-3 py-1.5 text-sm font-medium text-action hover:underline"
          data-testid="recovered-model-download"
        >
          Download the recovered model file (.model.json)
        </a>
        {omitted.length > 0 ? (
          <details className="text-sm">
            <summary>Left out of the recovered file ({omitted.length})</summary>
            <ul className="list-disc pl-5" data-testid="recovery-omitted">
              {omitted.slice(0, SHOWN_ISSUES).map((line, index) => (
                <li key={index}>{line}</li>
              ))}
            </ul>
          </details>
        ) : null}
      </section>
    </article>
  );
}
