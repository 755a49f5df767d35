// Writing CSV as RFC 4180 §2 describes, shared by the label exports and the audit-trail export.
// Values are written as given (no spreadsheet-formula guard): both files must stay byte-faithful
// to what is stored. The rejected-rows CSV of the ingest log adds such a guard on its own.

export type CsvValue = string | number | boolean | null | undefined;

/**
 * One field: rule 6, a field containing a line break (CR or LF), a double quote or a comma is
 * enclosed in double quotes; rule 7, a double quote inside it is escaped by another double quote;
 * rule 5, fields without those characters are left bare. An empty (null) value is an empty field.
 */
export function csvField(value: CsvValue): string {
  if (value === null || value === undefined) return "";
  const text = typeof value === "string" ? value : String(value);
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

/** Rule 1: each record ends with CRLF (the last one too: "may or may not"). */
export function csvRecord(values: readonly CsvValue[]): string {
  return `${values.map(csvField).join(",")}\r\n`;
}
