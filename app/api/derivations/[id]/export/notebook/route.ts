import { auditExport } from "@/lib/api/audit-export";
import { derivationRoute } from "@/lib/api/resource-route";
import { exportNotebookArchive } from "@/lib/derivations/archive";

type Params = { id: string };

/**
 * Downloads the whole notebook as one archive (.notebook.zip): the document,
 * its stored runs and its attached files. POST it to
 * /api/teams/[teamId]/derivations/import/notebook to get it all back.
 */
export const GET = derivationRoute<Params>("derivation:read", async ({ user, derivation }) => {
  const { bytes, filename } = await exportNotebookArchive(derivation);
  await auditExport({ actorId: user.id, derivation, format: "notebook-archive" });
  return new Response(bytes as BodyInit, {
    status: 200,
    headers: {
      "content-type": "application/zip",
      "content-length": String(bytes.byteLength),
      "content-disposition": `attachment; filename="${filename.replace(/["\\\r\n]/g, "")}"`,
      "cache-control": "no-store",
    },
  });
});
