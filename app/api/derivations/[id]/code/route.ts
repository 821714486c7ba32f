import { derivationRoute } from "@/lib/api/resource-route";
import { documentFromContent, modelFromDocument } from "@/lib/evaluation/document-content";
import { downloadResponse } from "@/lib/api/download";
import { codeExportInput, codeFileName, engineCodeLanguage } from "@/lib/evaluation/evaluate";
import { engineErrorToAppError, evaluateDocumentCached } from "@/lib/evaluation/service";
import { getEnginePool } from "@/lib/workers/engine-pool";
import { parseOrThrow } from "@/lib/validation/parse";
import { codeQuerySchema } from "./schema";

type Params = { id: string };

/**
 * Downloads M, f, the accelerations and A, B as code. The engine writes the
 * safety note into the file's comment header.
 */
export const GET = derivationRoute<Params>("derivation:read", async ({ request, derivation }) => {
  const query = parseOrThrow(codeQuerySchema, Object.fromEntries(new URL(request.url).searchParams));
  const language = engineCodeLanguage(query.language);
  const document = documentFromContent(derivation.content, derivation.title);
  const model = modelFromDocument(document);
  if (!model.title.trim()) model.title = derivation.title;
  const { result } = await evaluateDocumentCached({ document });
  const cached = result.code?.find((entry) => engineCodeLanguage(entry.language as "octave") === language);
  let source = cached?.source;
  if (source === undefined) {
    try {
      ({ code: source } = await getEnginePool().run<{ code: string }>("exportCode", { input: codeExportInput(model, result), language }));
    } catch (error) {
      throw engineErrorToAppError(error);
    }
  }
  return downloadResponse(source, { filename: codeFileName(model.title, language), contentType: "text/plain" });
});
