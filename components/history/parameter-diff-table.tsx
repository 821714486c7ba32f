import clsx from "clsx";
import type { ParameterChange } from "@/lib/history/document-diff";

const statusText: Record<ParameterChange["status"], string> = { added: "Added", removed: "Removed", changed: "Changed", unchanged: "" };
const rowStyle: Record<ParameterChange["status"], string> = {
  added: "bg-action-soft",
  removed: "bg-danger-soft",
  changed: "",
  unchanged: "text-muted",
};

type Field = "name" | "value" | "unit" | "description";

function Cell({ change, field }: { change: ParameterChange; field: Field }) {
  const before = change.before?.[field] ?? "";
  const after = change.after?.[field] ?? "";
  const show = (text: string) => (field === "value" && text.trim() === "" ? "symbolic" : text);
  if (change.status === "changed" && change.fields.includes(field)) {
    return (
      <td className="px-2 py-1.5 align-top" data-changed="true">
        <del className="bg-danger-soft px-0.5">{show(before)}</del>
        <span aria-hidden className="mx-1 text-muted">
          →
        </span>
        <span className="sr-only"> changed to </span>
        <ins className="bg-action-soft px-0.5 no-underline">{show(after)}</ins>
      </td>
    );
  }
  const text = change.status === "removed" ? before : after;
  return <td className={clsx("px-2 py-1.5 align-top", change.status === "removed" && "line-through")}>{show(text)}</td>;
}

/** The parameters of two revisions as one table: added, removed and changed rows, changed values as old → new. */
export function ParameterDiffTable({ changes }: { changes: readonly ParameterChange[] }) {
  if (changes.length === 0) return <p className="text-sm text-muted">Neither revision has parameters.</p>;
  return (
    <div className="overflow-x-auto rounded border border-line bg-surface">
      <table className="w-full min-w-[34rem] text-sm" data-testid="parameter-diff">
        <thead className="border-b border-line text-left text-xs text-muted">
          <tr>
            <th scope="col" className="px-2 py-1.5 font-medium">
              Name
            </th>
            <th scope="col" className="px-2 py-1.5 font-medium">
              Value
            </th>
            <th scope="col" className="px-2 py-1.5 font-medium">
              Unit
            </th>
            <th scope="col" className="px-2 py-1.5 font-medium">
              Description
            </th>
            <th scope="col" className="px-2 py-1.5 font-medium">
              Change
            </th>
          </tr>
        </thead>
        <tbody className="divide-y divide-line">
          {changes.map((change, index) => (
            <tr key={change.after?.id ?? change.before?.id ?? index} className={rowStyle[change.status]} data-status={change.status}>
              <Cell change={change} field="name" />
              <Cell change={change} field="value" />
              <Cell change={change} field="unit" />
              <Cell change={change} field="description" />
              <td
                className={clsx(
                  "px-2 py-1.5 align-top text-xs font-medium",
                  change.status === "added" ? "text-action" : change.status === "removed" ? "text-danger" : "text-ink",
                )}
              >
                {statusText[change.status]}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
