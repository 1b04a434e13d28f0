import { createHash } from "node:crypto";
import { canonicalJson } from "@jogwright/shared";

/** SHA-256 (hex) of a value's canonical JSON (sorted keys, no white space): the identity of a record. */
export function sha256OfCanonical(value: unknown): string {
  return createHash("sha256").update(canonicalJson(value), "utf8").digest("hex");
}
