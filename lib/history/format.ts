// How history, review and report pages write times and hashes. Times of record
// (revisions, approvals) are written in UTC, the same on the server's page and
// in the browser, so a printed report and the screen agree.

const recordTime = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "short", timeZone: "UTC" });
const recordDate = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeZone: "UTC" });

/** "12 May 2030, 14:02 UTC" */
export function formatRecordTime(iso: string | Date): string {
  return `${recordTime.format(typeof iso === "string" ? new Date(iso) : iso)} UTC`;
}

/** "12 May 2030" */
export function formatRecordDate(iso: string | Date): string {
  return recordDate.format(typeof iso === "string" ? new Date(iso) : iso);
}

/** The first 12 hex digits of a content hash: enough to tell revisions apart on screen. */
export function shortHash(hash: string): string {
  return hash.slice(0, 12);
}
