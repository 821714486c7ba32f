"use client";

/**
 * What a person's view choices need beyond the document's evaluation: the
 * linearization about another equilibrium (the linearize route, which reuses
 * the evaluation's derivation) and code in another language (the code route,
 * which exports from the evaluation's M and f). Both ask about the document the
 * results belong to, so they match what is on screen; neither re-derives the
 * model or stores anything. The equation form needs nothing: every form is in
 * the results already.
 */
import { useQueries } from "@tanstack/react-query";
import { useMemo } from "react";
import { apiFetch } from "@/lib/api/fetcher";
import { AppError } from "@/lib/errors";
import type { Cell, CodeExportLanguage, DerivationDocument } from "@/lib/notebook/document";
import type { NotebookResults } from "@/lib/notebook/results";

type Linearization = NonNullable<NotebookResults["linearization"]>;
type CodeEntry = NonNullable<NotebookResults["code"]>[number];

export interface ViewResults {
  /** Linearizations about equilibria chosen other than the evaluated one, by equilibrium index. */
  linearizations: ReadonlyMap<number, Linearization>;
  /** Code in languages chosen that the evaluation does not hold. */
  code: readonly CodeEntry[];
  /** Choices still being computed. */
  pendingEquilibria: ReadonlySet<number>;
  pendingLanguages: ReadonlySet<string>;
  /** Why a choice could not be computed. */
  error: string | null;
}

export const NO_VIEW_RESULTS: ViewResults = { linearizations: new Map(), code: [], pendingEquilibria: new Set(), pendingLanguages: new Set(), error: null };

/**
 * @param cells The cells as this person sees them (their choices laid over the author's).
 */
export function useViewResults({
  derivationId,
  results,
  resultsDocumentJson,
  cells,
}: {
  derivationId: string;
  results: NotebookResults | null;
  resultsDocumentJson: string | null;
  cells: readonly Cell[];
}): ViewResults {
  const evaluated = results?.linearization;
  const equilibria = [
    ...new Set(
      cells.flatMap((cell) =>
        cell.kind === "linearization" &&
        evaluated?.selected &&
        cell.settings.equilibriumIndex !== evaluated.selected.index &&
        cell.settings.equilibriumIndex < evaluated.equilibria.length
          ? [cell.settings.equilibriumIndex]
          : [],
      ),
    ),
  ].sort((a, b) => a - b);
  const held = new Set((results?.code ?? []).map((entry) => entry.language));
  const languages = results
    ? [...new Set(cells.flatMap((cell) => (cell.kind === "code-export" && !held.has(cell.settings.language) ? [cell.settings.language] : [])))].sort()
    : [];

  // The linearization's input values are the evaluated document's (its first linearization cell, as the evaluation used).
  const inputValues = useMemo(() => {
    if (!resultsDocumentJson) return {};
    const document = JSON.parse(resultsDocumentJson) as DerivationDocument;
    return document.cells.find((cell) => cell.kind === "linearization")?.settings.inputValues ?? {};
  }, [resultsDocumentJson]);

  const common = { staleTime: Infinity, gcTime: 5 * 60_000, retry: false, refetchOnWindowFocus: false, enabled: resultsDocumentJson !== null } as const;
  const linearizationQueries = useQueries({
    queries: equilibria.map((equilibriumIndex) => ({
      ...common,
      queryKey: ["derivations", derivationId, "linearization", resultsDocumentJson, equilibriumIndex],
      queryFn: ({ signal }: { signal: AbortSignal }) =>
        apiFetch<{ linearization: Linearization | null }>(`/api/derivations/${derivationId}/linearize`, {
          method: "POST",
          body: { document: JSON.parse(resultsDocumentJson!) as unknown, equilibriumIndex, inputValues },
          signal,
        }),
    })),
  });
  const codeQueries = useQueries({
    queries: languages.map((language: CodeExportLanguage) => ({
      ...common,
      queryKey: ["derivations", derivationId, "code", resultsDocumentJson, language],
      queryFn: ({ signal }: { signal: AbortSignal }) =>
        apiFetch<CodeEntry>(`/api/derivations/${derivationId}/code`, {
          method: "POST",
          body: { document: JSON.parse(resultsDocumentJson!) as unknown, language },
          signal,
        }),
    })),
  });

  const linearizations = new Map<number, Linearization>();
  const pendingEquilibria = new Set<number>();
  let error: unknown = null;
  linearizationQueries.forEach((query, i) => {
    if (query.data?.linearization) linearizations.set(equilibria[i]!, query.data.linearization);
    else if (query.isFetching) pendingEquilibria.add(equilibria[i]!);
    error ??= query.error;
  });
  const code: CodeEntry[] = [];
  const pendingLanguages = new Set<string>();
  codeQueries.forEach((query, i) => {
    if (query.data) code.push(query.data);
    else if (query.isFetching) pendingLanguages.add(languages[i]!);
    error ??= query.error;
  });
  return {
    linearizations,
    code,
    pendingEquilibria,
    pendingLanguages,
    error: error ? (error instanceof AppError ? error.message : "A view choice could not be computed.") : null,
  };
}

/**
 * The results a generated cell shows for this person's choice, and whether its
 * choice is still being computed (the cell is marked busy meanwhile and keeps
 * the evaluated results on screen).
 */
export function resultsForCell(
  cell: Cell,
  results: NotebookResults | null,
  view: ViewResults,
): { results: NotebookResults | null; computing: boolean; stale: boolean } {
  if (!results) return { results, computing: false, stale: false };
  if (cell.kind === "linearization") {
    const selected = results.linearization?.selected;
    const chosen = cell.settings.equilibriumIndex;
    if (!selected || selected.index === chosen) return { results, computing: false, stale: false };
    const linearization = view.linearizations.get(chosen);
    if (linearization) return { results: { ...results, linearization }, computing: false, stale: false };
    // Until the chosen equilibrium's linearization arrives, the one shown is another's: mark it.
    return { results, computing: view.pendingEquilibria.has(chosen), stale: true };
  }
  if (cell.kind === "code-export") {
    const computing = view.pendingLanguages.has(cell.settings.language);
    return { results: view.code.length === 0 ? results : { ...results, code: [...(results.code ?? []), ...view.code] }, computing, stale: false };
  }
  return { results, computing: false, stale: false };
}
