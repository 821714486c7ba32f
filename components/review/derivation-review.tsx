"use client";

import type { ReviewPanelData } from "@/lib/review/view";
import { LockBanner } from "./lock-banner";
import { ReviewPanel } from "./review-panel";

/** The notebook's review area: the lock banner when approved, then the review panel. */
export function DerivationReview({ data }: { data: ReviewPanelData }) {
  return (
    <div className="space-y-2" data-testid="derivation-review">
      {data.lock ? <LockBanner derivationId={data.derivationId} lock={data.lock} canUnlock={data.can.unlock} /> : null}
      <ReviewPanel data={data} />
    </div>
  );
}
