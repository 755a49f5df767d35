// A batch's problems as CSV (RFC 4180): one line per problem, with the row, the external id when it
// was usable, the field and the reason. Pure.
import type { StoredIngestProblem } from "@/lib/ingest/get-ingest-batch-problems";

/**
 * One CSV field: quoted when it holds a comma, quote or line break (RFC 4180 §2 rules 6–7). A value
 * that a spreadsheet would run as a formula (=, +, -, @, tab, carriage return first) gets a leading
 * apostrophe, as OWASP's CSV-injection guidance advises (from memory).
 */
export function csvField(value: string | number | null | undefined): string {
  if (value === null || value === undefined) return "";
  let text = String(value);
  if (typeof value === "string" && /^[=+\-@\t\r]/.test(text)) text = `'${text}`;
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

export function problemsCsv(problems: readonly StoredIngestProblem[]): string {
  const lines = ["row,externalId,kind,field,reason"];
  for (const problem of [...problems].sort((a, b) => a.row - b.row)) {
    lines.push([problem.row, problem.externalId, problem.kind, problem.path, problem.message].map(csvField).join(","));
  }
  return `${lines.join("\r\n")}\r\n`;
}
