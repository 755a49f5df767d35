// A strict RFC 4180 reader for the tests, written independently of the writer it checks:
// CRLF between records, fields optionally quoted, "" for a quote inside a quoted field.
export function readCsv(text: string): string[][] {
  const records: string[][] = [];
  let record: string[] = [];
  let field = "";
  let index = 0;
  let quoted = false;
  while (index < text.length) {
    const char = text[index];
    if (quoted) {
      if (char === '"' && text[index + 1] === '"') {
        field += '"';
        index += 2;
      } else if (char === '"') {
        quoted = false;
        index += 1;
      } else {
        field += char;
        index += 1;
      }
    } else if (char === '"') {
      if (field !== "") throw new Error(`quote inside an unquoted field at ${index}`);
      quoted = true;
      index += 1;
    } else if (char === ",") {
      record.push(field);
      field = "";
      index += 1;
    } else if (char === "\r" && text[index + 1] === "\n") {
      record.push(field);
      records.push(record);
      record = [];
      field = "";
      index += 2;
    } else if (char === "\r" || char === "\n") {
      throw new Error(`bare line break outside quotes at ${index}`);
    } else {
      field += char;
      index += 1;
    }
  }
  if (quoted) throw new Error("unterminated quoted field");
  if (field !== "" || record.length > 0) throw new Error("the last record is not terminated by CRLF");
  return records;
}
