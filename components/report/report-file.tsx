"use client";

import { useMutation } from "@tanstack/react-query";
import { ServerJobStatus, useServerJob } from "@/components/notebook/simulation/use-server-job";
import { Button } from "@/components/ui/button";
import { AppError } from "@/lib/errors";

/**
 * Asks a queue worker to render this revision's report as one HTML file (a
 * `report` job), follows its progress with a Cancel button, and offers the
 * stored file to download once it is ready.
 */
export function ReportFileButton({ derivationId, revisionId }: { derivationId: string; revisionId: string }) {
  const serverJob = useServerJob(derivationId);
  const render = useMutation({
    mutationFn: () => serverJob.run(`/api/derivations/${derivationId}/revisions/${revisionId}/report`, {}),
  });
  const ready = render.data?.state === "completed" ? render.data : null;
  const cancelled = render.error instanceof AppError && render.error.code === "conflict:job";
  return (
    <span className="flex flex-wrap items-center gap-2" data-testid="report-file">
      {serverJob.job ? (
        <ServerJobStatus job={serverJob.job} what="Report file" onCancel={() => void serverJob.cancel().catch(() => undefined)} />
      ) : (
        <Button onClick={() => render.mutate()} disabled={render.isPending} title="Render the report as one HTML file on the server, to download and keep">
          {ready ? "Render again" : "Render HTML file"}
        </Button>
      )}
      {ready ? (
        <a
          className="text-action hover:underline"
          href={`/api/derivations/${derivationId}/jobs/${ready.id}/download`}
          download
          data-testid="report-file-download"
        >
          Download the report file
        </a>
      ) : null}
      {render.isError && !serverJob.job ? (
        <span className="text-sm text-danger" role="alert">
          {cancelled ? "Cancelled." : render.error.message}
        </span>
      ) : null}
    </span>
  );
}
