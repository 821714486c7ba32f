import { downloadResponse, fileBaseName } from "@/lib/api/download";
import { auditExport } from "@/lib/api/audit-export";
import { derivationRoute } from "@/lib/api/resource-route";
import { recoverModel } from "@/lib/notebook/document";

type Params = { id: string };

/**
 * Downloads the model file recovered from the stored content, also when the
 * notebook cannot read it: every cell, row and field that can be read, with
 * values that are not numbers left symbolic. For readable content it is the
 * exported model file.
 */
export const GET = derivationRoute<Params>("derivation:read", async ({ user, derivation }) => {
  const { model } = recoverModel(derivation.content, derivation.title);
  await auditExport({ actorId: user.id, derivation, format: "recovered-model" });
  return downloadResponse(`${JSON.stringify(model, null, 2)}\n`, {
    filename: `${fileBaseName(model.title)}.recovered.model.json`,
    contentType: "application/json",
  });
});
