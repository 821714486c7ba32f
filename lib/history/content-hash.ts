import { createHash } from "node:crypto";
import canonicalize from "canonicalize";

/**
 * The content hash of a revision: SHA-256 (hex) of the document's RFC 8785
 * (JSON Canonicalization Scheme) serialisation, so a downstream build can
 * recompute it from the JSON it pulled, in any language with a JCS library.
 *
 * @example contentHash({ b: 1, a: [2] }) === contentHash({ a: [2], b: 1 }) // true
 */
export function contentHash(content: unknown): string {
  const canonical = canonicalize(content);
  if (canonical === undefined) throw new TypeError("content has no JSON form");
  return createHash("sha256").update(canonical, "utf8").digest("hex");
}
