"use client";

/**
 * The study cell's settings: how parameters vary (a grid or a seeded
 * tolerance run), the operating cases, the simulation's time and accuracy, and
 * the names to watch. Every change is one `updateSettings` operation on the
 * shared document, like the simulation cell's; text is kept as typed and
 * checked by the server, whose field errors are shown beside their fields.
 */
import clsx from "clsx";
import { useId, useMemo, type ReactNode } from "react";
import { STUDY_LIMITS, type DerivationDocument, type DocumentOperation } from "@/lib/notebook/document";
import { rowsOfKind } from "@/lib/notebook/document/symbols";
import { ExpressionEditor } from "../editor/expression-editor";
import { STUDY_CASE_LIMIT, STUDY_PARAMETER_LIMIT, STUDY_RUN_LIMIT, studyRunCount } from "./run-count";
import type { StudyCaseSetting, StudyParameterSetting, StudySettings } from "./settings-types";

export const inputClass =
  "w-full min-w-0 rounded border border-line bg-paper px-1.5 py-0.5 font-mono text-[13px] text-ink aria-[invalid=true]:border-danger read-only:bg-sunken";
const selectClass = "rounded border border-line bg-paper px-1 py-0.5 text-[13px] text-ink aria-[invalid=true]:border-danger disabled:opacity-70";
const legendClass = "mb-1 text-xs uppercase tracking-wide text-muted";
const addClass = "self-start text-sm text-action hover:underline disabled:text-muted disabled:no-underline";

/** The names a study may read from the model, by kind, in document order. */
export interface StudyModelNames {
  parameters: { name: string; unit: string; value: string }[];
  coordinates: string[];
  inputs: string[];
  outputs: { name: string; unit: string }[];
  multipliers: string[];
}

export function studyModelNames(doc: DerivationDocument): StudyModelNames {
  const named = <T extends { name: string }>(rows: { row: T }[]): T[] => rows.map(({ row }) => row).filter((row) => row.name.trim() !== "");
  const names = (rows: { row: { name: string } }[]) => named(rows).map((row) => row.name.trim());
  return {
    parameters: named(rowsOfKind(doc, "parameters")).map((row) => ({ name: row.name.trim(), unit: row.unit.trim(), value: row.value.trim() })),
    coordinates: names(rowsOfKind(doc, "coordinates")),
    inputs: names(rowsOfKind(doc, "inputs")),
    outputs: named(rowsOfKind(doc, "outputs")).map((row) => ({ name: row.name.trim(), unit: row.unit.trim() })),
    multipliers: [
      ...names(rowsOfKind(doc, "constraints")).map((name) => `lambda_${name}`),
      ...names(rowsOfKind(doc, "rate-constraints")).map((name) => `mu_${name}`),
    ],
  };
}

/** A new parameter entry, spread around the parameter's nominal value when it has one. */
export function newParameterEntry(name: string, nominal: string): StudyParameterSetting {
  const value = Number(nominal);
  if (nominal !== "" && Number.isFinite(value) && value !== 0) {
    const low = Number((value * 0.95).toPrecision(6));
    const high = Number((value * 1.05).toPrecision(6));
    return { name, values: `${low}, ${value}, ${high}`, distribution: "uniform", min: String(low), max: String(high), mean: String(value), sd: "" };
  }
  return { name, values: "", distribution: "uniform", min: "", max: "", mean: "", sd: "" };
}

function nextCaseName(cases: readonly StudyCaseSetting[]): string {
  const taken = new Set(cases.map((c) => c.name));
  let n = cases.length + 1;
  while (taken.has(`case ${n}`)) n++;
  return `case ${n}`;
}

function FieldError({ id, message }: { id: string; message?: string }) {
  if (!message) return null;
  return (
    <span id={id} className="text-xs text-danger" data-testid="study-field-error">
      {message}
    </span>
  );
}

function TextField({
  id,
  label,
  value,
  error,
  placeholder,
  readOnly,
  mono = true,
  inputMode = "decimal",
  onChange,
}: {
  id: string;
  label: ReactNode;
  value: string;
  error?: string;
  placeholder?: string;
  readOnly?: boolean;
  mono?: boolean;
  inputMode?: "decimal" | "text" | "numeric";
  onChange: (value: string) => void;
}) {
  return (
    <div className="flex min-w-0 flex-col gap-0.5 text-[13px] text-muted">
      <label htmlFor={id}>{label}</label>
      <input
        id={id}
        className={clsx(inputClass, !mono && "font-sans")}
        value={value}
        placeholder={placeholder}
        readOnly={readOnly}
        inputMode={inputMode}
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : undefined}
        onChange={(event) => onChange(event.target.value)}
      />
      <FieldError id={`${id}-error`} message={error} />
    </div>
  );
}

/** Field-error keys this form has a place for; the rest are listed above it. */
function placedKeys(settings: StudySettings, names: StudyModelNames): Set<string> {
  const keys = new Set(["mode", "samples", "seed", "parameters", "cases", "watch", "startTime", "endTime", "outputStep", "tolerance"]);
  settings.parameters.forEach((_, i) => {
    for (const field of ["name", "values", "distribution", "min", "max", "mean", "sd"]) keys.add(`parameters.${i}.${field}`);
    keys.add(`parameters.${i}`);
  });
  settings.cases.forEach((_, i) => {
    keys.add(`cases.${i}`);
    keys.add(`cases.${i}.name`);
    for (const q of names.coordinates) {
      keys.add(`cases.${i}.initialCoordinates.${q}`);
      keys.add(`cases.${i}.initialRates.${q}`);
    }
    for (const u of names.inputs) keys.add(`cases.${i}.inputs.${u}`);
  });
  settings.watch.forEach((_, i) => keys.add(`watch.${i}`));
  return keys;
}

export interface StudySettingsFormProps {
  cellId: string;
  settings: StudySettings;
  document: DerivationDocument;
  readOnly?: boolean;
  /** Field errors of the last refused run (400 `invalid:study`), keyed like `parameters.0.values`. */
  errors?: Readonly<Record<string, string>>;
  onOperation: (op: DocumentOperation) => void;
}

export function StudySettingsForm({ cellId, settings, document: doc, readOnly = false, errors = {}, onOperation }: StudySettingsFormProps) {
  const names = useMemo(() => studyModelNames(doc), [doc]);
  const uid = useId();
  const id = (key: string) => `${cellId}-${uid}-${key.replace(/[^A-Za-z0-9_-]/g, "_")}`;
  const update = (patch: Partial<StudySettings>) => onOperation({ type: "updateSettings", cellId, patch });
  const count = studyRunCount(settings);
  const placed = placedKeys(settings, names);
  const unplaced = Object.entries(errors).filter(([key]) => !placed.has(key));

  const setParameter = (index: number, patch: Partial<StudyParameterSetting>) =>
    update({ parameters: settings.parameters.map((p, i) => (i === index ? { ...p, ...patch } : p)) });
  const setCase = (index: number, patch: Partial<StudyCaseSetting>) => update({ cases: settings.cases.map((c, i) => (i === index ? { ...c, ...patch } : c)) });

  const chosen = new Set(settings.parameters.map((p) => p.name));
  const unchosen = names.parameters.filter((p) => !chosen.has(p.name));
  const tolerance = settings.mode === "tolerance";

  return (
    <div className="flex min-w-0 flex-col gap-4" data-testid="study-settings">
      {unplaced.length > 0 && (
        <ul className="list-disc rounded border border-danger/60 bg-danger-soft py-1.5 pl-7 pr-3 text-sm text-danger" data-testid="study-unplaced-errors">
          {unplaced.map(([key, message]) => (
            <li key={key}>
              {key === "_" ? "" : <span className="font-mono">{key}</span>}
              {key === "_" ? "" : ": "}
              {message}
            </li>
          ))}
        </ul>
      )}

      <fieldset className="min-w-0">
        <legend className={legendClass}>How the parameters vary</legend>
        <div className="flex flex-wrap items-end gap-x-4 gap-y-2">
          <div role="radiogroup" aria-label="Study mode" className="flex flex-wrap gap-3 text-sm">
            {(
              [
                ["grid", "Grid (every combination of listed values)"],
                ["tolerance", "Tolerance run (sampled, seeded)"],
              ] as const
            ).map(([mode, label]) => (
              <label key={mode} className="flex items-center gap-1.5">
                <input type="radio" name={id("mode")} value={mode} checked={settings.mode === mode} disabled={readOnly} onChange={() => update({ mode })} />
                {label}
              </label>
            ))}
          </div>
          {tolerance && (
            <div className="grid grid-cols-2 gap-2 sm:w-72">
              <TextField
                id={id("samples")}
                label="Samples per case"
                value={settings.samples}
                error={errors.samples}
                inputMode="numeric"
                readOnly={readOnly}
                onChange={(samples) => update({ samples })}
              />
              <TextField
                id={id("seed")}
                label="Seed"
                value={settings.seed}
                error={errors.seed}
                inputMode="numeric"
                readOnly={readOnly}
                onChange={(seed) => update({ seed })}
              />
            </div>
          )}
        </div>
        <FieldError id={id("mode-error")} message={errors.mode} />
      </fieldset>

      <fieldset className="min-w-0">
        <legend className={legendClass}>Parameters to vary</legend>
        <FieldError id={id("parameters-error")} message={errors.parameters} />
        {settings.parameters.length === 0 && (
          <p className="text-sm text-muted">
            {names.parameters.length === 0 ? "The Parameters cell has no parameters yet." : "None: every run uses the Parameters cell's values."}
          </p>
        )}
        <div className="flex min-w-0 flex-col gap-2">
          {settings.parameters.map((parameter, i) => {
            const known = names.parameters.find((p) => p.name === parameter.name);
            const e = (field: string) => errors[`parameters.${i}.${field}`];
            return (
              <div
                key={i}
                className="grid min-w-0 grid-cols-1 gap-2 rounded border border-line/70 p-2 sm:grid-cols-[10rem_1fr_auto]"
                data-testid="study-parameter"
                aria-label={`Parameter ${i + 1}`}
                role="group"
              >
                <div className="flex min-w-0 flex-col gap-0.5 text-[13px] text-muted">
                  <label htmlFor={id(`p${i}-name`)}>Parameter</label>
                  <select
                    id={id(`p${i}-name`)}
                    className={clsx(selectClass, "font-mono")}
                    value={parameter.name}
                    disabled={readOnly}
                    aria-invalid={e("name") ? true : undefined}
                    aria-describedby={e("name") ? `${id(`p${i}-name`)}-error` : undefined}
                    onChange={(event) => {
                      const next = names.parameters.find((p) => p.name === event.target.value);
                      setParameter(i, newParameterEntry(event.target.value, next?.value ?? ""));
                    }}
                  >
                    {!known && <option value={parameter.name}>{parameter.name || "—"} (not in the model)</option>}
                    {names.parameters
                      .filter((p) => p.name === parameter.name || !chosen.has(p.name))
                      .map((p) => (
                        <option key={p.name} value={p.name}>
                          {p.name}
                        </option>
                      ))}
                  </select>
                  {known && (
                    <span className="text-xs">
                      nominal {known.value || "symbolic"}
                      {known.unit && ` ${known.unit}`}
                    </span>
                  )}
                  <FieldError id={`${id(`p${i}-name`)}-error`} message={e("name")} />
                </div>
                {tolerance ? (
                  <div className="grid min-w-0 grid-cols-2 gap-2 sm:grid-cols-[8rem_repeat(auto-fill,minmax(6rem,1fr))]">
                    <div className="col-span-2 flex min-w-0 flex-col gap-0.5 text-[13px] text-muted sm:col-span-1">
                      <label htmlFor={id(`p${i}-distribution`)}>Distribution</label>
                      <select
                        id={id(`p${i}-distribution`)}
                        className={selectClass}
                        value={parameter.distribution}
                        disabled={readOnly}
                        aria-invalid={e("distribution") ? true : undefined}
                        onChange={(event) => setParameter(i, { distribution: event.target.value as StudyParameterSetting["distribution"] })}
                      >
                        <option value="uniform">Uniform (min … max)</option>
                        <option value="normal">Normal, truncated</option>
                      </select>
                      <FieldError id={`${id(`p${i}-distribution`)}-error`} message={e("distribution")} />
                    </div>
                    {parameter.distribution === "normal" && (
                      <>
                        <TextField
                          id={id(`p${i}-mean`)}
                          label="Mean"
                          value={parameter.mean}
                          error={e("mean")}
                          readOnly={readOnly}
                          onChange={(mean) => setParameter(i, { mean })}
                        />
                        <TextField
                          id={id(`p${i}-sd`)}
                          label="Standard deviation"
                          value={parameter.sd}
                          error={e("sd")}
                          readOnly={readOnly}
                          onChange={(sd) => setParameter(i, { sd })}
                        />
                      </>
                    )}
                    <TextField
                      id={id(`p${i}-min`)}
                      label="Min"
                      value={parameter.min}
                      error={e("min")}
                      readOnly={readOnly}
                      onChange={(min) => setParameter(i, { min })}
                    />
                    <TextField
                      id={id(`p${i}-max`)}
                      label="Max"
                      value={parameter.max}
                      error={e("max")}
                      readOnly={readOnly}
                      onChange={(max) => setParameter(i, { max })}
                    />
                  </div>
                ) : (
                  <TextField
                    id={id(`p${i}-values`)}
                    label="Values: a list (0.5, 1, 2) or from:to:count"
                    value={parameter.values}
                    error={e("values")}
                    placeholder="e.g. 0.5:2:4"
                    inputMode="text"
                    readOnly={readOnly}
                    onChange={(values) => setParameter(i, { values })}
                  />
                )}
                {!readOnly && (
                  <button
                    type="button"
                    className="self-start text-sm text-muted hover:text-danger sm:mt-5"
                    aria-label={`Remove parameter ${parameter.name || i + 1}`}
                    onClick={() => update({ parameters: settings.parameters.filter((_, j) => j !== i) })}
                  >
                    Remove
                  </button>
                )}
              </div>
            );
          })}
          {!readOnly && (
            <button
              type="button"
              className={addClass}
              disabled={unchosen.length === 0 || settings.parameters.length >= STUDY_PARAMETER_LIMIT}
              title={settings.parameters.length >= STUDY_PARAMETER_LIMIT ? `At most ${STUDY_PARAMETER_LIMIT} parameters` : undefined}
              onClick={() => {
                const next = unchosen[0]!;
                update({ parameters: [...settings.parameters, newParameterEntry(next.name, next.value)] });
              }}
            >
              + Add parameter
            </button>
          )}
        </div>
      </fieldset>

      <fieldset className="min-w-0">
        <legend className={legendClass}>Operating cases (every parameter sample runs once per case)</legend>
        <FieldError id={id("cases-error")} message={errors.cases} />
        <div className="flex min-w-0 flex-col gap-2">
          {settings.cases.map((studyCase, i) => (
            <CaseEditor
              key={i}
              index={i}
              studyCase={studyCase}
              names={names}
              errors={errors}
              readOnly={readOnly}
              fieldId={(key) => id(`c${i}-${key}`)}
              canRemove={settings.cases.length > 1}
              onChange={(patch) => setCase(i, patch)}
              onRemove={() => update({ cases: settings.cases.filter((_, j) => j !== i) })}
            />
          ))}
          {!readOnly && (
            <button
              type="button"
              className={addClass}
              disabled={settings.cases.length >= STUDY_CASE_LIMIT}
              title={settings.cases.length >= STUDY_CASE_LIMIT ? `At most ${STUDY_CASE_LIMIT} cases` : undefined}
              onClick={() =>
                update({ cases: [...settings.cases, { name: nextCaseName(settings.cases), initialCoordinates: {}, initialRates: {}, inputs: {} }] })
              }
            >
              + Add case
            </button>
          )}
        </div>
      </fieldset>

      <fieldset className="min-w-0">
        <legend className={legendClass}>Time and accuracy (every run)</legend>
        <div className="grid min-w-0 grid-cols-2 gap-2 sm:grid-cols-4">
          <TextField
            id={id("startTime")}
            label="Start time (s)"
            value={settings.startTime}
            error={errors.startTime}
            readOnly={readOnly}
            onChange={(startTime) => update({ startTime })}
          />
          <TextField
            id={id("endTime")}
            label="End time (s)"
            value={settings.endTime}
            error={errors.endTime}
            readOnly={readOnly}
            onChange={(endTime) => update({ endTime })}
          />
          <TextField
            id={id("outputStep")}
            label="Output step (s)"
            value={settings.outputStep}
            error={errors.outputStep}
            readOnly={readOnly}
            onChange={(outputStep) => update({ outputStep })}
          />
          <TextField
            id={id("tolerance")}
            label="Relative tolerance"
            value={settings.tolerance}
            error={errors.tolerance}
            readOnly={readOnly}
            onChange={(tolerance) => update({ tolerance })}
          />
        </div>
      </fieldset>

      <WatchPicker names={names} watch={settings.watch} errors={errors} readOnly={readOnly} fieldId={id} onChange={(watch) => update({ watch })} />

      <p
        className={clsx("text-sm", count.total !== null && count.total > STUDY_RUN_LIMIT ? "text-danger" : "text-ink")}
        data-testid="study-run-count"
        aria-live="polite"
      >
        {count.total === null ? (
          <>Total runs: — (check {count.unreadable})</>
        ) : (
          <>
            Total runs: <strong className="tabular-nums">{count.total.toLocaleString("en-GB")}</strong>{" "}
            <span className="text-muted">
              ({count.perCase} {tolerance ? "samples" : count.perCase === 1 ? "parameter set" : "parameter sets"} × {count.cases}{" "}
              {count.cases === 1 ? "case" : "cases"})
            </span>
            {count.total > STUDY_RUN_LIMIT && <> — over the limit of {STUDY_RUN_LIMIT.toLocaleString("en-GB")} runs per study.</>}
          </>
        )}
      </p>
    </div>
  );
}

function CaseEditor({
  index,
  studyCase,
  names,
  errors,
  readOnly,
  fieldId,
  canRemove,
  onChange,
  onRemove,
}: {
  index: number;
  studyCase: StudyCaseSetting;
  names: StudyModelNames;
  errors: Readonly<Record<string, string>>;
  readOnly: boolean;
  fieldId: (key: string) => string;
  canRemove: boolean;
  onChange: (patch: Partial<StudyCaseSetting>) => void;
  onRemove: () => void;
}) {
  const e = (key: string) => errors[`cases.${index}.${key}`];
  const errorCount = Object.keys(errors).filter((key) => key.startsWith(`cases.${index}.`)).length;
  const symbols = useMemo(() => ({ coordinates: [], parameters: names.parameters.map((p) => p.name), inputs: [], definitions: [] }), [names.parameters]);
  return (
    <details className="min-w-0 rounded border border-line/70 p-2" open={index === 0 || errorCount > 0 || undefined} data-testid="study-case">
      <summary className="cursor-pointer text-sm">
        <span className="font-medium">{studyCase.name || `Case ${index + 1}`}</span>
        {errorCount > 0 && <span className="ml-2 text-xs text-danger">{errorCount === 1 ? "1 field to correct" : `${errorCount} fields to correct`}</span>}
      </summary>
      <div className="mt-2 flex min-w-0 flex-col gap-2">
        <div className="flex flex-wrap items-end gap-2">
          <div className="w-48 max-w-full">
            <TextField
              id={fieldId("name")}
              label="Case name"
              value={studyCase.name}
              error={e("name")}
              mono={false}
              inputMode="text"
              readOnly={readOnly}
              onChange={(name) => onChange({ name })}
            />
          </div>
          {!readOnly && canRemove && (
            <button type="button" className="text-sm text-muted hover:text-danger" aria-label={`Remove case ${studyCase.name || index + 1}`} onClick={onRemove}>
              Remove case
            </button>
          )}
        </div>
        {names.coordinates.length > 0 && (
          <div className="grid min-w-0 grid-cols-[repeat(auto-fill,minmax(8rem,1fr))] gap-2">
            {names.coordinates.map((q) => (
              <div key={q} className="contents">
                <TextField
                  id={fieldId(`q-${q}`)}
                  label={<span className="font-mono">{q}(t₀)</span>}
                  value={studyCase.initialCoordinates[q] ?? ""}
                  placeholder="0"
                  error={e(`initialCoordinates.${q}`)}
                  readOnly={readOnly}
                  onChange={(value) => onChange({ initialCoordinates: { ...studyCase.initialCoordinates, [q]: value } })}
                />
                <TextField
                  id={fieldId(`r-${q}`)}
                  label={<span className="font-mono">{q}&apos;(t₀)</span>}
                  value={studyCase.initialRates[q] ?? ""}
                  placeholder="0"
                  error={e(`initialRates.${q}`)}
                  readOnly={readOnly}
                  onChange={(value) => onChange({ initialRates: { ...studyCase.initialRates, [q]: value } })}
                />
              </div>
            ))}
          </div>
        )}
        {names.inputs.length > 0 && (
          <div className="flex min-w-0 flex-col gap-1.5">
            <span className="text-[13px] text-muted">Inputs as functions of t (blank is 0)</span>
            {names.inputs.map((u) => (
              <div key={u} className="grid min-w-0 grid-cols-[4rem_1fr] items-center gap-2">
                <span className="font-mono text-sm">{u}(t) =</span>
                <div className="min-w-0">
                  <ExpressionEditor
                    value={studyCase.inputs[u] ?? ""}
                    onChange={(value) => onChange({ inputs: { ...studyCase.inputs, [u]: value } })}
                    label={`Input ${u} of case ${studyCase.name || index + 1}`}
                    symbols={symbols}
                    allowEmpty
                    readOnly={readOnly}
                    placeholder="e.g. 0.4*(t < 2.5)"
                    data-testid={`study-case-${index}-input-${u}`}
                  />
                  <FieldError id={fieldId(`u-${u}-error`)} message={e(`inputs.${u}`)} />
                </div>
              </div>
            ))}
          </div>
        )}
      </div>
    </details>
  );
}

function WatchPicker({
  names,
  watch,
  errors,
  readOnly,
  fieldId,
  onChange,
}: {
  names: StudyModelNames;
  watch: readonly string[];
  errors: Readonly<Record<string, string>>;
  readOnly: boolean;
  fieldId: (key: string) => string;
  onChange: (watch: string[]) => void;
}) {
  const groups: { label: string; items: { name: string; unit?: string }[] }[] = [
    { label: "Outputs", items: names.outputs },
    { label: "Multipliers", items: names.multipliers.map((name) => ({ name })) },
    { label: "Coordinates", items: names.coordinates.map((name) => ({ name })) },
  ];
  const known = new Set(groups.flatMap((g) => g.items.map((item) => item.name)));
  const missing = watch.filter((name) => !known.has(name));
  const errorOf = (name: string) => {
    const index = watch.indexOf(name);
    return index < 0 ? undefined : errors[`watch.${index}`];
  };
  const toggle = (name: string, on: boolean) => onChange(on ? [...watch, name] : watch.filter((w) => w !== name));
  const full = watch.length >= STUDY_LIMITS.watch;
  const box = (name: string, label: ReactNode) => {
    const error = errorOf(name);
    const boxId = fieldId(`watch-${name}`);
    return (
      <span key={name} className="flex flex-col">
        <label className="flex items-center gap-1.5 text-sm">
          <input
            id={boxId}
            type="checkbox"
            checked={watch.includes(name)}
            disabled={readOnly || (full && !watch.includes(name))}
            aria-invalid={error ? true : undefined}
            aria-describedby={error ? `${boxId}-error` : undefined}
            onChange={(event) => toggle(name, event.target.checked)}
          />
          {label}
        </label>
        <FieldError id={`${boxId}-error`} message={error} />
      </span>
    );
  };
  return (
    <fieldset className="min-w-0">
      <legend className={legendClass}>Watch (peaks, envelopes and worst cases)</legend>
      <FieldError id={fieldId("watch-error")} message={errors.watch} />
      {full && <p className="text-xs text-muted">At most {STUDY_LIMITS.watch} watched names.</p>}
      {known.size === 0 && <p className="text-sm text-muted">The model has no outputs, multipliers or coordinates yet.</p>}
      <div className="flex min-w-0 flex-col gap-1.5">
        {groups
          .filter((g) => g.items.length > 0)
          .map((group) => (
            // The names wrap beside their group's label, never under it.
            <div key={group.label} role="group" aria-label={group.label} className="flex min-w-0 items-start gap-x-4">
              <span className="w-24 shrink-0 text-[13px] text-muted">{group.label}</span>
              <div className="flex min-w-0 flex-1 flex-wrap items-start gap-x-4 gap-y-1">
                {group.items.map((item) =>
                  box(
                    item.name,
                    <>
                      <span className="font-mono">{item.name}</span>
                      {item.unit ? <span className="text-muted">({item.unit})</span> : null}
                    </>,
                  ),
                )}
              </div>
            </div>
          ))}
        {missing.length > 0 && (
          <div role="group" aria-label="No longer in the model" className="flex min-w-0 items-start gap-x-4">
            <span className="w-24 shrink-0 text-[13px] text-danger">Not in the model</span>
            <div className="flex min-w-0 flex-1 flex-wrap items-start gap-x-4 gap-y-1">
              {missing.map((name) => box(name, <span className="font-mono line-through">{name}</span>))}
            </div>
          </div>
        )}
      </div>
    </fieldset>
  );
}
