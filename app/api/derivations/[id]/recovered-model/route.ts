import { downloadResponse, fileBaseName } from "@/lib/api/download";
import { apiRoute } from "@/lib/api/route";
import { loadDerivationFor } from "@/lib/auth/access";
import { requireUser } from "@/lib/auth/session";
import { recoverModel } from "@/lib/notebook/document";
import { derivationIdOf } from "../derivation-id";

type Params = { id: string };

/**
 * Downloads the model file recovered from the stored content, also when the
 * notebook cannot read it: every cell, row and field that can be read, with
 * values that are not numbers left symbolic. For readable content it is the
 * exported model file.
 */
export const GET = apiRoute<Params>(async (_request, { params }) => {
  const user = await requireUser();
  const id = await derivationIdOf(params);
  const { derivation } = await loadDerivationFor(user, id, "derivation:read");
  const { model } = recoverModel(derivation.content, derivation.title);
  return downloadResponse(`${JSON.stringify(model, null, 2)}\n`, { filename: `${fileBaseName(model.title)}.recovered.model.json`, contentType: "application/json" });
});
