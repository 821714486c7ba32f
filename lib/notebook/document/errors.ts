/** A problem with an operation or a conversion, named by the field it concerns. */
export class DocumentError extends Error {
  readonly field: string;
  constructor(field: string, message: string) {
    super(message);
    this.name = "DocumentError";
    this.field = field;
  }
}

/** One problem of a stored document, at a path such as `cells[3].rows[0].name`. */
export interface DocumentIssue {
  path: string;
  message: string;
}

/** A zod issue path as the text field errors are keyed by: `cells[3].rows[0].name`. */
export function formatIssuePath(path: readonly PropertyKey[]): string {
  return path.reduce<string>((text, key) => (typeof key === "number" ? `${text}[${key}]` : text === "" ? String(key) : `${text}.${String(key)}`), "");
}
