// Turning an ingest body (JSON array, NDJSON or CSV) into rows for validation. Pure: text in, rows out.
// Error messages describe where the text breaks but never quote it, since a body may hold a card number.
import { looksLikeFullCardNumber, maskCardNumber } from "@/lib/ingest/card-number-guard";

export interface BodyPosition {
  /** 1-based line number. */
  line: number;
  /** 1-based column, counted in UTF-16 code units (what editors and JavaScript string indices use). */
  column: number;
  /** 0-based offset into the text, in UTF-16 code units, after a leading byte-order mark is removed. */
  offset: number;
}

export type ParseBodyFailure = { ok: false; message: string; position?: BodyPosition };
export type ParseBodyResult = { ok: true; rows: unknown[] } | ParseBodyFailure;
/** NDJSON rows also carry the 1-based line each came from, so errors can point back to it. */
export type NdjsonParseResult = { ok: true; rows: unknown[]; lineNumbers: number[] } | ParseBodyFailure;
export type CsvRecord = Record<string, string>;
export type CsvParseResult =
  | { ok: true; header: string[]; rows: CsvRecord[]; lineNumbers: number[] }
  | ParseBodyFailure;

function stripByteOrderMark(text: string): string {
  return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
}

/** Line and column of an offset; "\n", "\r\n" and a lone "\r" each end a line. */
function positionAt(text: string, offset: number, from = 0, firstLine = 1): BodyPosition {
  let line = firstLine;
  let lineStart = from;
  for (let i = from; i < offset; i++) {
    const code = text.charCodeAt(i);
    if (code === 10 || (code === 13 && text.charCodeAt(i + 1) !== 10)) {
      line++;
      lineStart = i + 1;
    }
  }
  return { line, column: offset - lineStart + 1, offset };
}

// ---------------------------------------------------------------------------------------------------
// JSON syntax scan (RFC 8259) to locate the first error.
//
// JSON.parse does the parsing; this scan only runs after it has failed, to say where and why. We do not
// reuse the engine's message: its wording differs between engine versions, some messages carry no
// position, and newer ones quote a slice of the input — which could contain a card number.

interface SyntaxProblem {
  offset: number;
  message: string;
}

function describeCharacter(ch: string): string {
  const code = ch.charCodeAt(0);
  if (code > 0x20 && code < 0x7f) return `'${ch}'`;
  return `character U+${code.toString(16).toUpperCase().padStart(4, "0")}`;
}

function isJsonWhitespace(code: number): boolean {
  return code === 0x20 || code === 0x09 || code === 0x0a || code === 0x0d;
}

function isDigit(code: number): boolean {
  return code >= 48 && code <= 57;
}

function isHexDigit(code: number): boolean {
  return isDigit(code) || (code >= 65 && code <= 70) || (code >= 97 && code <= 102);
}

type ScanMode = "value" | "value-or-close-array" | "key-or-close-object" | "key" | "colon" | "after-value";

/**
 * Scans text[from, to) as one JSON text and returns the first syntax problem, or null when it is valid.
 * Iterative (an explicit stack of open containers), so deep nesting cannot overflow the call stack.
 */
export function findJsonSyntaxError(text: string, from = 0, to = text.length): SyntaxProblem | null {
  const open: ("array" | "object")[] = [];
  let mode: ScanMode = "value";
  let i = from;

  const scanString = (): SyntaxProblem | null => {
    const start = i;
    i++; // opening quote
    while (i < to) {
      const code = text.charCodeAt(i);
      if (code === 0x22) {
        i++;
        return null;
      }
      if (code === 0x5c) {
        const escape = text[i + 1];
        if (i + 1 >= to) break;
        if (escape === "u") {
          for (let k = 2; k < 6; k++) {
            if (i + k >= to || !isHexDigit(text.charCodeAt(i + k))) {
              return { offset: Math.min(i + k, to), message: "invalid \\u escape: expected 4 hexadecimal digits" };
            }
          }
          i += 6;
          continue;
        }
        if ('"\\/bfnrt'.includes(escape)) {
          i += 2;
          continue;
        }
        return { offset: i + 1, message: `invalid escape sequence \\${describeCharacter(escape).replace(/^'|'$/g, "")}` };
      }
      if (code < 0x20) {
        return { offset: i, message: "unescaped control character inside a string (line breaks and tabs must be written as \\n, \\t)" };
      }
      i++;
    }
    return { offset: start, message: "unterminated string: the string that starts here has no closing double quote" };
  };

  const scanNumber = (): SyntaxProblem | null => {
    if (text.charCodeAt(i) === 0x2d) i++; // minus
    if (i >= to || !isDigit(text.charCodeAt(i))) return { offset: i, message: "invalid number: expected a digit" };
    if (text.charCodeAt(i) === 0x30) {
      i++;
      if (i < to && isDigit(text.charCodeAt(i))) return { offset: i, message: "invalid number: leading zeros are not allowed" };
    } else {
      while (i < to && isDigit(text.charCodeAt(i))) i++;
    }
    if (i < to && text.charCodeAt(i) === 0x2e) {
      i++;
      if (i >= to || !isDigit(text.charCodeAt(i))) return { offset: i, message: "invalid number: expected a digit after the decimal point" };
      while (i < to && isDigit(text.charCodeAt(i))) i++;
    }
    if (i < to && (text[i] === "e" || text[i] === "E")) {
      i++;
      if (i < to && (text[i] === "+" || text[i] === "-")) i++;
      if (i >= to || !isDigit(text.charCodeAt(i))) return { offset: i, message: "invalid number: expected a digit in the exponent" };
      while (i < to && isDigit(text.charCodeAt(i))) i++;
    }
    return null;
  };

  const closer = (container: "array" | "object") => (container === "array" ? "']'" : "'}'");

  for (;;) {
    while (i < to && isJsonWhitespace(text.charCodeAt(i))) i++;
    const top = open[open.length - 1];
    if (i >= to) {
      if (mode === "after-value" && top === undefined) return null;
      if (top !== undefined && mode === "after-value") {
        return { offset: i, message: `unexpected end of input: expected ',' or ${closer(top)}` };
      }
      return { offset: i, message: mode === "colon" ? "unexpected end of input: expected ':'" : "unexpected end of input: expected a value" };
    }
    const ch = text[i];

    switch (mode) {
      case "value-or-close-array":
        if (ch === "]") {
          open.pop();
          i++;
          mode = "after-value";
          break;
        }
      // falls through
      case "value": {
        if (ch === "{") {
          open.push("object");
          i++;
          mode = "key-or-close-object";
        } else if (ch === "[") {
          open.push("array");
          i++;
          mode = "value-or-close-array";
        } else if (ch === '"') {
          const problem = scanString();
          if (problem) return problem;
          mode = "after-value";
        } else if (ch === "-" || isDigit(text.charCodeAt(i))) {
          const problem = scanNumber();
          if (problem) return problem;
          mode = "after-value";
        } else {
          const literal = ["true", "false", "null"].find((word) => text.startsWith(word, i) && i + word.length <= to);
          if (literal === undefined) {
            const trailingComma = top === "array" && ch === "]";
            return {
              offset: i,
              message: trailingComma
                ? `expected a value, found ${describeCharacter(ch)} (a comma may not come before a closing bracket)`
                : `expected a value, found ${describeCharacter(ch)}`,
            };
          }
          i += literal.length;
          mode = "after-value";
        }
        break;
      }
      case "key-or-close-object":
        if (ch === "}") {
          open.pop();
          i++;
          mode = "after-value";
          break;
        }
      // falls through
      case "key": {
        if (ch !== '"') {
          const hint = mode === "key" && ch === "}" ? " (a comma may not come before a closing brace)" : "";
          return { offset: i, message: `expected a property name in double quotes, found ${describeCharacter(ch)}${hint}` };
        }
        const problem = scanString();
        if (problem) return problem;
        mode = "colon";
        break;
      }
      case "colon":
        if (ch !== ":") return { offset: i, message: `expected ':' after the property name, found ${describeCharacter(ch)}` };
        i++;
        mode = "value";
        break;
      case "after-value":
        if (top === undefined) {
          return { offset: i, message: `unexpected ${describeCharacter(ch)} after the end of the JSON value` };
        }
        if (ch === ",") {
          i++;
          mode = top === "array" ? "value" : "key";
        } else if ((top === "array" && ch === "]") || (top === "object" && ch === "}")) {
          open.pop();
          i++;
        } else {
          const after = top === "array" ? "an array element" : "a property value";
          return { offset: i, message: `expected ',' or ${closer(top)} after ${after}, found ${describeCharacter(ch)}` };
        }
        break;
    }
  }
}

/** Where JSON.parse failed, from our scan; the engine's "at position N" only as a fallback. */
function locateJsonError(text: string, from: number, to: number, error: unknown): SyntaxProblem {
  const problem = findJsonSyntaxError(text, from, to);
  if (problem) return problem;
  const match = error instanceof Error ? /at position (\d+)/.exec(error.message) : null;
  return { offset: match ? from + Number(match[1]) : from, message: "malformed JSON" };
}

function kindOf(value: unknown): string {
  if (value === null) return "null";
  if (Array.isArray(value)) return "an array";
  if (typeof value === "object") return "an object";
  return `a ${typeof value}`;
}

// ---------------------------------------------------------------------------------------------------
// JSON array body

/** Parses a body that must be one JSON array of rows (RFC 8259). */
export function parseJsonArrayBody(text: string): ParseBodyResult {
  const body = stripByteOrderMark(text);
  if (body.trim() === "") return { ok: false, message: "the body is empty: expected a JSON array of rows" };
  let value: unknown;
  try {
    value = JSON.parse(body);
  } catch (error) {
    const problem = locateJsonError(body, 0, body.length, error);
    const position = positionAt(body, problem.offset);
    return {
      ok: false,
      message: `malformed JSON at line ${position.line}, column ${position.column}: ${problem.message}`,
      position,
    };
  }
  if (!Array.isArray(value)) {
    return { ok: false, message: `expected a JSON array of rows, got ${kindOf(value)}` };
  }
  return { ok: true, rows: value };
}

// ---------------------------------------------------------------------------------------------------
// NDJSON body

/**
 * Parses newline-delimited JSON: one JSON value per line, lines ending in "\n" (a "\r" before it is
 * dropped). Blank lines are skipped. A malformed line stops the parse and names its line number.
 */
export function parseNdjsonBody(text: string): NdjsonParseResult {
  const body = stripByteOrderMark(text);
  const rows: unknown[] = [];
  const lineNumbers: number[] = [];
  let lineStart = 0;
  let lineNumber = 1;

  while (lineStart <= body.length) {
    const newline = body.indexOf("\n", lineStart);
    const next = newline === -1 ? body.length : newline;
    const lineEnd = next > lineStart && body.charCodeAt(next - 1) === 13 ? next - 1 : next;
    const line = body.slice(lineStart, lineEnd);

    if (line.trim() !== "") {
      try {
        rows.push(JSON.parse(line));
        lineNumbers.push(lineNumber);
      } catch (error) {
        const problem = locateJsonError(body, lineStart, lineEnd, error);
        const column = problem.offset - lineStart + 1;
        return {
          ok: false,
          message: `line ${lineNumber}: malformed JSON at column ${column}: ${problem.message}`,
          position: { line: lineNumber, column, offset: problem.offset },
        };
      }
    }
    if (newline === -1) break;
    lineStart = newline + 1;
    lineNumber++;
  }
  return { ok: true, rows, lineNumbers };
}

// ---------------------------------------------------------------------------------------------------
// CSV (RFC 4180)

/** A header name as it may appear in a message: card-number-like names masked, long ones cut. */
function shownHeaderName(name: string): string {
  if (looksLikeFullCardNumber(name)) return maskCardNumber(name);
  return name.length > 60 ? `${name.slice(0, 57)}...` : name;
}

function countLineBreaks(text: string): number {
  let count = 0;
  for (let i = 0; i < text.length; i++) {
    const code = text.charCodeAt(i);
    if (code === 10 || (code === 13 && text.charCodeAt(i + 1) !== 10)) count++;
  }
  return count;
}

function csvFailure(body: string, offset: number, message: string): ParseBodyFailure {
  const position = positionAt(body, offset);
  return { ok: false, message: `CSV line ${position.line}, column ${position.column}: ${message}`, position };
}

/**
 * Parses CSV as RFC 4180 §2 describes it: comma-separated fields, records ending in CRLF (LF and a lone
 * CR are accepted too), fields optionally enclosed in double quotes, which may then contain commas, line
 * breaks and doubled double quotes. The first record is the header and is required; header names are
 * trimmed, must be non-empty and unique. Every record must have as many fields as the header. Spaces in
 * data fields are kept (rule 4). Entirely empty lines are skipped.
 */
export function parseCsv(text: string): CsvParseResult {
  const body = stripByteOrderMark(text);
  const n = body.length;
  const records: { fields: string[]; offset: number; line: number }[] = [];

  let i = 0;
  let line = 1; // physical line at i; quoted fields may span several
  while (i < n) {
    const recordOffset = i;
    const recordLine = line;
    const fields: string[] = [];
    let endOfRecord = false;

    // An entirely empty line is not a record.
    if (body[i] === "\n" || body[i] === "\r") {
      i += body[i] === "\r" && body[i + 1] === "\n" ? 2 : 1;
      line++;
      continue;
    }

    while (!endOfRecord) {
      let field: string;
      if (body[i] === '"') {
        // Quoted field (rules 5–7): runs to the next double quote that is not doubled.
        const opening = i;
        const parts: string[] = [];
        let segmentStart = ++i;
        for (;;) {
          const close = body.indexOf('"', i);
          if (close === -1) {
            return csvFailure(body, opening, "this quoted field is never closed: add the closing double quote (RFC 4180 §2 rule 6)");
          }
          if (body[close + 1] === '"') {
            parts.push(body.slice(segmentStart, close + 1)); // keep one of the two quotes (rule 7)
            i = segmentStart = close + 2;
            continue;
          }
          parts.push(body.slice(segmentStart, close));
          i = close + 1;
          break;
        }
        field = parts.join("");
        line += countLineBreaks(field);
        if (i < n && body[i] !== "," && body[i] !== "\n" && body[i] !== "\r") {
          return csvFailure(
            body,
            i,
            "unexpected text after a closing double quote: a quote inside a quoted field must be doubled (RFC 4180 §2 rule 7)",
          );
        }
      } else {
        let j = i;
        while (j < n && body[j] !== "," && body[j] !== "\n" && body[j] !== "\r") {
          if (body[j] === '"') {
            return csvFailure(
              body,
              j,
              "double quote inside a field that is not enclosed in double quotes: enclose the field in double quotes and double the quote (RFC 4180 §2 rules 5 and 7)",
            );
          }
          j++;
        }
        field = body.slice(i, j);
        i = j;
      }
      fields.push(field);

      if (i >= n) {
        endOfRecord = true;
      } else if (body[i] === ",") {
        i++; // at the end of the text, the next pass reads the empty last field of "a,b,"
      } else {
        i += body[i] === "\r" && body[i + 1] === "\n" ? 2 : 1;
        line++;
        endOfRecord = true;
      }
    }
    records.push({ fields, offset: recordOffset, line: recordLine });
  }

  if (records.length === 0) {
    return { ok: false, message: "the CSV is empty: a header row naming the columns is required" };
  }

  const header = records[0].fields.map((name) => name.trim());
  const seen = new Set<string>();
  for (let k = 0; k < header.length; k++) {
    if (header[k] === "") return csvFailure(body, records[0].offset, `header column ${k + 1} has no name`);
    if (seen.has(header[k])) {
      return csvFailure(body, records[0].offset, `header names column ${JSON.stringify(shownHeaderName(header[k]))} twice`);
    }
    seen.add(header[k]);
  }

  const rows: CsvRecord[] = [];
  const lineNumbers: number[] = [];
  for (let r = 1; r < records.length; r++) {
    const { fields, offset, line: recordLine } = records[r];
    if (fields.length !== header.length) {
      return csvFailure(
        body,
        offset,
        `this record has ${fields.length} field${fields.length === 1 ? "" : "s"} but the header has ${header.length} (RFC 4180 §2 rule 4)`,
      );
    }
    // fromEntries defines own properties, so a column named "__proto__" stays an ordinary key.
    rows.push(Object.fromEntries(header.map((name, k) => [name, fields[k]])));
    lineNumbers.push(recordLine);
  }
  return { ok: true, header, rows, lineNumbers };
}

// ---------------------------------------------------------------------------------------------------
// CSV records into the JSON shape of each row kind

const DECIMAL = /^[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?$/;
const INTEGER = /^[+-]?[0-9]+$/;

/**
 * A CSV cell as a number when it is plainly one. Otherwise the text is kept, so that validation reports
 * "expected a number" for it. Integers beyond 2^53 are kept as text too: converting them would change
 * their digits, and the card-number guard must see the digits as sent.
 */
function csvNumber(cell: string): number | string {
  const text = cell.trim();
  if (!DECIMAL.test(text)) return cell;
  const value = Number(text);
  if (!Number.isFinite(value)) return cell;
  if (INTEGER.test(text) && !Number.isSafeInteger(value)) return cell;
  return value;
}

function csvBoolean(cell: string): boolean | string {
  const text = cell.trim().toLowerCase();
  if (text === "true" || text === "1") return true;
  if (text === "false" || text === "0") return false;
  return cell;
}

/** "code:contribution;code:contribution" → [{ code, contribution }]; the last ':' splits, so codes may hold one. */
function csvReasonCodes(cell: string): { code: string; contribution?: number | string }[] {
  return cell
    .split(";")
    .map((part) => part.trim())
    .filter((part) => part !== "")
    .map((part) => {
      const colon = part.lastIndexOf(":");
      if (colon === -1) return { code: part };
      const code = part.slice(0, colon).trim();
      const contribution = part.slice(colon + 1).trim();
      return contribution === "" ? { code } : { code, contribution: csvNumber(contribution) };
    });
}

function convertRecord(record: CsvRecord, convert: (key: string, cell: string) => unknown): Record<string, unknown> {
  const entries: [string, unknown][] = [];
  for (const [key, cell] of Object.entries(record)) {
    if (cell === "") continue; // an empty cell means the field is absent
    entries.push([key, convert(key, cell)]);
  }
  return Object.fromEntries(entries);
}

/**
 * One CSV record as the JSON shape of an alert row: amountMinor, score and inclusionProbability as
 * numbers; belowTheLine from true/false/1/0; reasonCodes from "code:contribution;code:contribution".
 * Empty cells are left out. Other columns pass through as text, so the card-number guard still sees them.
 */
export function csvRecordToAlertInput(record: CsvRecord): Record<string, unknown> {
  return convertRecord(record, (key, cell) => {
    switch (key) {
      case "amountMinor":
      case "score":
      case "inclusionProbability":
        return csvNumber(cell);
      case "belowTheLine":
        return csvBoolean(cell);
      case "reasonCodes":
        return csvReasonCodes(cell);
      default:
        return cell;
    }
  });
}

/** One CSV record as the JSON shape of a label row (all fields are text); empty cells are left out. */
export function csvRecordToLabelInput(record: CsvRecord): Record<string, unknown> {
  return convertRecord(record, (_key, cell) => cell);
}

/** One CSV record as the JSON shape of an outcome row (all fields are text); empty cells are left out. */
export function csvRecordToOutcomeInput(record: CsvRecord): Record<string, unknown> {
  return convertRecord(record, (_key, cell) => cell);
}
