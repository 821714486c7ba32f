"use client";

/**
 * The frequency response of a linearization: choose outputs (y = C x + D u)
 * and an input, and see the Bode plot (magnitude in dB and phase against
 * frequency, log axes), the poles with their natural frequencies and damping
 * ratios, the zeros where defined, and the state-space matrices for download
 * as JSON, CSV or code. Loaded on first use (uPlot and the numerics).
 */
import { useId, useMemo, useState } from "react";
import { CODE_LANGUAGES, exportStateSpace, frequencyResponse, polesOf, transmissionZeros, type CodeLanguage, type StateSpace } from "@/lib/mechanics/browser";
import type { NotebookResults } from "@/lib/notebook/results";
import { Chart, type ChartSeries } from "./simulation/chart";

type Selected = NonNullable<NonNullable<NotebookResults["linearization"]>["selected"]>;

export interface FrequencyResponsePanelProps {
  selected: Selected;
  /** The cell's saved choice: output names, and the input (blank: the first). */
  outputs?: readonly string[];
  input?: string;
  /** Title for exported files. */
  title: string;
  /** Called with a new choice; absent for a reader, whose choice stays on the page. */
  onChoose?: (patch: { outputs?: string[]; input?: string }) => void;
}

const LANGUAGE_LABELS: Record<CodeLanguage, string> = { c: "C", python: "Python", julia: "Julia", matlab: "Octave/MATLAB", typescript: "TypeScript" };
const EXTENSIONS: Record<string, string> = { json: "json", csv: "csv", c: "c", python: "py", julia: "jl", matlab: "m", typescript: "ts" };

function complexText(re: number, im: number): string {
  const part = (value: number) => Number(value.toPrecision(4)).toString().replace("-", "−");
  if (Math.abs(im) < 1e-12 * Math.max(1, Math.abs(re))) return part(re);
  return `${part(re)} ${im < 0 ? "−" : "+"} ${part(Math.abs(im))}i`;
}

/** The state space of the chosen outputs, from the evaluation's rows of C and D. */
export function chosenStateSpace(selected: Selected, outputs: readonly string[]): StateSpace | null {
  const rows = selected.outputs;
  if (!rows) return null;
  const picked = outputs.map((name) => rows.names.indexOf(name)).filter((k) => k >= 0);
  return {
    state: selected.stateNames,
    inputs: selected.inputNames,
    outputs: picked.map((k) => rows.names[k]!),
    A: selected.A,
    B: selected.B,
    C: picked.map((k) => rows.C[k]!),
    D: picked.map((k) => rows.D[k]!),
  };
}

function download(text: string, filename: string, type: string) {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const link = document.createElement("a");
  link.href = url;
  link.download = filename;
  link.click();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

export default function FrequencyResponsePanel({ selected, outputs: savedOutputs, input: savedInput, title, onChoose }: FrequencyResponsePanelProps) {
  const available = selected.outputs?.names ?? [];
  const initialOutputs = (savedOutputs ?? []).filter((name) => available.includes(name));
  const [outputs, setOutputs] = useState<string[]>(initialOutputs.length > 0 ? initialOutputs : available.slice(0, 1));
  const [input, setInput] = useState<string>(savedInput && selected.inputNames.includes(savedInput) ? savedInput : (selected.inputNames[0] ?? ""));
  const [language, setLanguage] = useState<CodeLanguage>("python");

  const ss = useMemo(() => chosenStateSpace(selected, outputs), [selected, outputs]);
  const poles = useMemo(() => polesOf(selected.A), [selected.A]);
  const responses = useMemo(() => {
    if (!ss || ss.outputs.length === 0 || input === "") return [];
    return ss.outputs.map((output) => {
      try {
        return { output, response: frequencyResponse(ss, { input, output }), problem: null };
      } catch (error) {
        return { output, response: null, problem: error instanceof Error ? error.message : String(error) };
      }
    });
  }, [ss, input]);
  const zeros = useMemo(() => (ss && input !== "" ? ss.outputs.map((output) => ({ output, zeros: transmissionZeros(ss, input, output) })) : []), [ss, input]);

  function toggle(name: string) {
    const next = outputs.includes(name) ? outputs.filter((o) => o !== name) : available.filter((o) => o === name || outputs.includes(o));
    setOutputs(next);
    onChoose?.({ outputs: next });
  }

  const unitOf = (name: string) => selected.outputs?.units[selected.outputs.names.indexOf(name)] ?? "";
  const first = responses.find((r) => r.response)?.response ?? null;
  const polesCaptionId = useId();
  const magnitude: ChartSeries[] = responses.flatMap((r, i) => (r.response ? [{ label: r.output, values: r.response.magnitudeDb, colorIndex: i }] : []));
  const phase: ChartSeries[] = responses.flatMap((r, i) => (r.response ? [{ label: r.output, values: r.response.phaseDeg, colorIndex: i }] : []));
  const base = title.trim() || "linearization";

  if (!selected.outputs) return null;
  return (
    <section className="flex min-w-0 flex-col gap-3 border-t border-line pt-3" aria-label="Frequency response" data-testid="frequency-response">
      <h4 className="text-[13px] font-medium">Frequency response</h4>
      {selected.inputNames.length === 0 ? (
        <p className="text-sm text-muted">
          The model has no inputs. Add one in an Inputs cell, and a generalized force that uses it, to see how an output responds to it.
        </p>
      ) : (
        <div className="flex flex-wrap items-start gap-x-6 gap-y-2 text-[13px]">
          <label className="flex flex-col gap-1 text-muted">
            Input
            <select
              className="rounded border border-line bg-paper px-1.5 py-0.5 text-ink"
              value={input}
              onChange={(event) => {
                setInput(event.target.value);
                onChoose?.({ input: event.target.value });
              }}
              data-testid="frequency-input"
            >
              {selected.inputNames.map((name) => (
                <option key={name} value={name}>
                  {name}
                </option>
              ))}
            </select>
          </label>
          <fieldset className="flex min-w-0 flex-col gap-1">
            <legend className="text-muted">Outputs y = C x + D u</legend>
            <div className="flex flex-wrap gap-x-3 gap-y-1">
              {available.map((name) => (
                <label key={name} className="flex items-center gap-1 font-mono text-ink">
                  <input type="checkbox" checked={outputs.includes(name)} onChange={() => toggle(name)} />
                  {name}
                  {unitOf(name) && <span className="font-sans text-xs text-muted">({unitOf(name)})</span>}
                </label>
              ))}
            </div>
          </fieldset>
        </div>
      )}
      {selected.outputs.notes.length > 0 && (
        <ul className="text-xs text-muted" data-testid="frequency-notes">
          {selected.outputs.notes.map((note) => (
            <li key={note}>Not offered as an output: {note}</li>
          ))}
        </ul>
      )}
      {responses.some((r) => r.problem) && (
        <p className="text-sm text-danger" role="alert">
          {responses
            .filter((r) => r.problem)
            .map((r) => `${r.output}: ${r.problem}`)
            .join("; ")}
        </p>
      )}
      {first && (
        <div className="grid min-w-0 gap-x-4 gap-y-5 lg:grid-cols-2">
          <Chart
            title={`Magnitude, ${input} to the outputs`}
            xLabel="ω (rad/s)"
            yLabel="dB (output unit per input unit)"
            x={first.frequencies}
            series={magnitude}
            xLog
            testId="bode-magnitude"
          />
          <Chart title={`Phase, ${input} to the outputs`} xLabel="ω (rad/s)" yLabel="degrees" x={first.frequencies} series={phase} xLog testId="bode-phase" />
        </div>
      )}
      {/* The description sits outside the scrolling box: as the table's caption it would be as wide as the table and scroll away with it. */}
      <div className="flex min-w-0 flex-col">
        <p id={polesCaptionId} className="text-xs text-muted">
          Poles (eigenvalues of A) with natural frequency ωₙ = |p| and damping ratio ζ = −Re p / |p|
        </p>
        <div className="overflow-x-auto" tabIndex={0} role="region" aria-label="Poles (scrolls sideways)">
          <table className="text-sm tabular-nums" data-testid="poles-table" aria-labelledby={polesCaptionId}>
            <thead>
              <tr className="text-left text-xs text-muted">
                <th className="pr-4 font-medium">Pole (1/s)</th>
                <th className="pr-4 font-medium">ωₙ (rad/s)</th>
                <th className="pr-4 font-medium">fₙ (Hz)</th>
                <th className="font-medium">ζ</th>
              </tr>
            </thead>
            <tbody>
              {poles.map((p, k) => (
                <tr key={k} data-testid="pole-row">
                  <td className={`whitespace-nowrap pr-4 font-mono ${p.pole.re > 0 ? "text-danger" : ""}`}>{complexText(p.pole.re, p.pole.im)}</td>
                  <td className="whitespace-nowrap pr-4 font-mono">{Number(p.naturalFrequency.toPrecision(4))}</td>
                  <td className="whitespace-nowrap pr-4 font-mono">{Number((p.naturalFrequency / (2 * Math.PI)).toPrecision(4))}</td>
                  <td className="font-mono">{p.dampingRatio === null ? "—" : Number(p.dampingRatio.toPrecision(3))}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </div>
      {zeros.length > 0 && (
        <ul className="text-sm" data-testid="zeros">
          {zeros.map(({ output, zeros: z }) => (
            <li key={output}>
              Zeros, {input} to <span className="font-mono">{output}</span>:{" "}
              {z.available ? (
                z.zeros.length === 0 ? (
                  "none"
                ) : (
                  <span className="font-mono">{z.zeros.map((c) => complexText(c.re, c.im)).join(", ")}</span>
                )
              ) : (
                <span className="text-muted">{z.reason}</span>
              )}
            </li>
          ))}
        </ul>
      )}
      {ss && ss.outputs.length > 0 && (
        <div className="flex flex-wrap items-center gap-2 text-[13px]" data-testid="state-space-export">
          <span className="text-muted">A, B, C, D:</span>
          <button
            type="button"
            className="rounded border border-line px-2 py-0.5 text-action hover:border-action"
            onClick={() => download(exportStateSpace(ss, "json", base), `${base}-state-space.json`, "application/json")}
          >
            JSON
          </button>
          <button
            type="button"
            className="rounded border border-line px-2 py-0.5 text-action hover:border-action"
            onClick={() => download(exportStateSpace(ss, "csv", base), `${base}-state-space.csv`, "text/csv")}
          >
            CSV
          </button>
          <select
            className="rounded border border-line bg-paper px-1.5 py-0.5 text-ink"
            aria-label="Code language"
            value={language}
            onChange={(event) => setLanguage(event.target.value as CodeLanguage)}
          >
            {CODE_LANGUAGES.map((l) => (
              <option key={l} value={l}>
                {LANGUAGE_LABELS[l]}
              </option>
            ))}
          </select>
          <button
            type="button"
            className="rounded border border-line px-2 py-0.5 text-action hover:border-action"
            onClick={() => download(exportStateSpace(ss, language, base), `${base}-state-space.${EXTENSIONS[language]}`, "text/plain")}
          >
            Code
          </button>
        </div>
      )}
    </section>
  );
}
