import { apiRoute } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { exportNotebookArchive } from "@/lib/derivations/archive";
import { derivationIdOf } from "../../derivation-id";

type Params = { id: string };

/**
 * Downloads the whole notebook as one archive (.notebook.zip): the document,
 * its stored runs and its attached files. POST it to
 * /api/teams/[teamId]/derivations/import/notebook to get it all back.
 */
export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  const { derivation } = await loadDerivationFor(user, id, "derivation:read");
  const { bytes, filename } = await exportNotebookArchive(derivation);
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
