import { AppError } from "@/lib/errors";
import { uuidField } from "@/lib/validation/fields";

// An id that is not a uuid cannot exist; answer as for any missing derivation.
export async function derivationIdOf(params: Promise<{ id: string }>): Promise<string> {
  const parsed = uuidField.safeParse((await params).id);
  if (!parsed.success) throw new AppError("not_found:derivation", "Derivation not found.");
  return parsed.data;
}
