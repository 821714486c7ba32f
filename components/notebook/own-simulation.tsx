"use client";

/**
 * A person's own simulation of a derivation that has no simulation cell: the
 * same settings, Web Worker run and stored runs as the cell, with settings
 * kept in the person's view (never in the document). Anyone who may read the
 * derivation may run it; storing a run on the server needs the simulate right.
 */
import type { Ref } from "react";
import { DEFAULT_SIMULATION_SETTINGS, type DerivationDocument, type SimulationCell, type SimulationSettings } from "@/lib/notebook/document";
import type { NotebookResults } from "@/lib/notebook/results";
import { SimulationCellView } from "./simulation/simulation-cell";

export interface OwnSimulationProps {
  document: DerivationDocument;
  results: NotebookResults | null;
  derivationId: string;
  /** The person's settings so far (the simulation's defaults fill the rest). */
  settings: Partial<SimulationSettings> | undefined;
  canStoreRuns: boolean;
  onSettingsChange: (patch: Partial<SimulationSettings> | undefined) => void;
  onClose: () => void;
  ref?: Ref<HTMLElement>;
}

function ignoreDocumentOperation() {
  // This simulation is not a cell of the document: nothing here may change it.
}

export function OwnSimulation({ ref, ...props }: OwnSimulationProps) {
  const cell: SimulationCell = { id: "own-simulation", kind: "simulation", collapsed: false, settings: { ...DEFAULT_SIMULATION_SETTINGS, ...props.settings } };
  return (
    <section
      ref={ref}
      className="hn-cell min-w-0 scroll-mt-4 rounded border border-line border-l-4 border-l-action/50 bg-surface"
      aria-label="Your simulation"
      data-testid="own-simulation"
    >
      <header className="flex flex-wrap items-center gap-2 border-b border-line/70 px-2 py-1.5">
        <span
          className="inline-flex min-w-7 justify-center rounded bg-action-soft px-1.5 py-0.5 font-mono text-[11px] leading-none text-action"
          aria-hidden="true"
        >
          t→
        </span>
        <h3 className="text-sm font-medium text-ink">Your simulation</h3>
        <span className="min-w-0 flex-1 text-xs text-muted">not part of the document</span>
        <button type="button" className="rounded px-1.5 text-muted hover:bg-sunken hover:text-ink" aria-label="Close your simulation" onClick={props.onClose}>
          ×
        </button>
      </header>
      <div className="min-w-0 p-3">
        <SimulationCellView
          cell={cell}
          results={props.results}
          document={props.document}
          derivationId={props.derivationId}
          readOnly
          canStoreRuns={props.canStoreRuns}
          onOperation={ignoreDocumentOperation}
          onSettingsChange={(patch) => props.onSettingsChange(patch)}
          onResetSettings={props.settings ? () => props.onSettingsChange(undefined) : undefined}
        />
      </div>
    </section>
  );
}
