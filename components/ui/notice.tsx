import clsx from "clsx";
import type { ReactNode } from "react";

const tones = {
  error: "border-danger/50 bg-danger-soft text-danger",
  info: "border-action/40 bg-action-soft text-ink",
  seal: "border-seal/50 bg-seal-soft text-ink",
};

export function Notice({ tone = "info", children, className }: { tone?: keyof typeof tones; children: ReactNode; className?: string }) {
  return (
    <div role={tone === "error" ? "alert" : "status"} className={clsx("rounded border px-3 py-2 text-sm [overflow-wrap:anywhere]", tones[tone], className)}>
      {children}
    </div>
  );
}
