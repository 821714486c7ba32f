import clsx from "clsx";
import { statusLabels, type DerivationStatus } from "@/lib/domain";

const styles: Record<DerivationStatus, string> = {
  draft: "border-line bg-sunken text-muted",
  in_review: "border-review/40 bg-review-soft text-review",
  approved: "border-seal/60 bg-seal-soft text-seal",
};

const marks: Record<DerivationStatus, string> = { draft: "○", in_review: "◐", approved: "●" };

export function StatusBadge({ status }: { status: DerivationStatus }) {
  return (
    <span className={clsx("inline-flex items-center gap-1 rounded-sm border px-1.5 py-px text-xs font-medium", styles[status])}>
      <span aria-hidden>{marks[status]}</span>
      {statusLabels[status]}
    </span>
  );
}
