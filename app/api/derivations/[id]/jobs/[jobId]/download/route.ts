import { derivationRoute } from "@/lib/api/resource-route";
import { AppError } from "@/lib/errors";
import { contentDisposition } from "@/lib/files/names";
import type { ReportJobResult } from "@/lib/jobs/handlers";
import { jobOfDerivation } from "@/lib/jobs/service";
import { getObjectStream } from "@/lib/storage";

type Params = { id: string; jobId: string };

/**
 * The file a completed report job stored, as a download. A sandboxing CSP and
 * `nosniff` keep the browser from running anything in it (it has no script).
 */
export const GET = derivationRoute<Params>("derivation:read", async ({ derivation, params }) => {
  const job = await jobOfDerivation(derivation.id, params.jobId);
  // A job without a file (yet) is there, it just has nothing to give: 409, as for other states that refuse a request.
  if (job.kind !== "report") throw new AppError("conflict:job", `This ${job.kind} job has no file to download.`);
  if (job.state !== "completed") throw new AppError("conflict:job", `The report is not ready: the job is ${job.state}.`);
  const file = job.result as unknown as ReportJobResult;
  const object = await getObjectStream({ key: file.objectKey });
  if (!object) throw new AppError("not_found:job", "The report's file is missing from storage.");
  const headers = new Headers({
    "content-type": file.contentType,
    "content-disposition": contentDisposition("attachment", file.filename),
    "x-content-type-options": "nosniff",
    "content-security-policy": "default-src 'none'; style-src 'unsafe-inline'; img-src data:; sandbox",
    "cache-control": "private, max-age=0, must-revalidate",
  });
  if (object.contentLength !== null) headers.set("content-length", String(object.contentLength));
  return new Response(object.body, { status: 200, headers });
});
