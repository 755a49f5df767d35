// Content hash of a validated alert, for idempotent ingest: the scoring service may resend an alert with
// the same externalId. Same content → same hash → a duplicate to acknowledge; different content → a
// conflict to report. Hashing the validated value (not the raw text) makes key order, whitespace,
// omitted defaults and the way an instant is written irrelevant.
import { createHash } from "node:crypto";
import type { AlertRow } from "@/lib/ingest/schemas";

/**
 * Canonical JSON: object keys sorted by UTF-16 code units, no whitespace, strings and numbers as
 * JSON.stringify writes them (the ordering and serialization of RFC 8785, the JSON Canonicalization
 * Scheme, for the values an alert holds). Dates become their ISO 8601 UTC string; object fields that are
 * undefined are left out. Throws on values JSON cannot carry (non-finite numbers, invalid dates, bigints,
 * functions, symbols) rather than hashing something ambiguous.
 */
export function canonicalJson(value: unknown): string {
  if (value === null) return "null";
  if (value instanceof Date) {
    if (Number.isNaN(value.getTime())) throw new TypeError("canonicalJson: invalid date");
    return JSON.stringify(value.toISOString());
  }
  switch (typeof value) {
    case "string":
    case "boolean":
      return JSON.stringify(value);
    case "number":
      if (!Number.isFinite(value)) throw new TypeError("canonicalJson: numbers must be finite");
      return JSON.stringify(value); // writes -0 as 0, as RFC 8785 requires
    case "object": {
      if (Array.isArray(value)) {
        return `[${value.map((item) => (item === undefined ? "null" : canonicalJson(item))).join(",")}]`;
      }
      const entries = Object.entries(value as Record<string, unknown>)
        .filter(([, item]) => item !== undefined)
        .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
      return `{${entries.map(([key, item]) => `${JSON.stringify(key)}:${canonicalJson(item)}`).join(",")}}`;
    }
    default:
      throw new TypeError(`canonicalJson: cannot represent a ${typeof value}`);
  }
}

/** SHA-256 (FIPS 180-4) of a UTF-8 string, as 64 lowercase hexadecimal digits. */
export function sha256Hex(text: string): string {
  return createHash("sha256").update(text, "utf8").digest("hex");
}

/** SHA-256 hex of the canonical JSON of a validated alert. */
export function alertContentHash(value: AlertRow): string {
  return sha256Hex(canonicalJson(value));
}
