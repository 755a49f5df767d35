// The body of an ingest request (POST /api/v1/alerts, /labels, /outcomes) as rows: the content
// type picks the parser, the byte size and the row count are capped, and each failure is the
// AppError its HTTP status needs — 415 wrong content type, 413 too large, 400 malformed with the
// position. Messages never quote the body, since a body may hold a card number.
import { AppError } from "@/lib/errors";
import {
  csvRecordToAlertInput,
  csvRecordToLabelInput,
  csvRecordToOutcomeInput,
  parseCsv,
  parseJsonArrayBody,
  parseNdjsonBody,
  type CsvRecord,
} from "@/lib/ingest/parse-body";
import type { IngestKind } from "@/lib/ingest/ingest-batch";

/** Bytes per request, whatever the row count: 10,000 rows of about 1 KB each fit with room to spare. */
export const MAX_INGEST_BODY_BYTES = 32 * 1024 * 1024;

export const INGEST_MEDIA_TYPES = {
  "application/json": "json",
  "application/x-ndjson": "ndjson",
  "application/ndjson": "ndjson",
  "application/jsonl": "ndjson",
  "text/csv": "csv",
} as const;

type BodyFormat = (typeof INGEST_MEDIA_TYPES)[keyof typeof INGEST_MEDIA_TYPES];

const csvConverters: Record<IngestKind, (record: CsvRecord) => Record<string, unknown>> = {
  alerts: csvRecordToAlertInput,
  labels: csvRecordToLabelInput,
  outcomes: csvRecordToOutcomeInput,
};

export interface ReadIngestRowsOptions {
  kind: IngestKind;
  /** Settings → ingest.maxRowsPerRequest. */
  maxRows: number;
  maxBytes?: number;
}

function formatOf(contentType: string | null): BodyFormat {
  const mediaType = (contentType ?? "").split(";")[0].trim().toLowerCase();
  const format = INGEST_MEDIA_TYPES[mediaType as keyof typeof INGEST_MEDIA_TYPES];
  if (!format) {
    throw new AppError(
      "unsupported_media_type",
      `${mediaType ? `Content-Type ${mediaType} is not accepted` : "The request has no Content-Type"}: send application/json (a JSON array of rows), application/x-ndjson (one JSON row per line) or text/csv (with a header row).`,
    );
  }
  return format;
}

function tooLarge(maxBytes: number): AppError {
  return new AppError("too_large", `The body is larger than ${Math.floor(maxBytes / (1024 * 1024))} MiB: split it into several requests.`);
}

/** Reads the body as UTF-8, stopping as soon as it passes the byte limit. */
async function readText(request: Request, maxBytes: number): Promise<string> {
  const declared = Number(request.headers.get("content-length"));
  if (Number.isFinite(declared) && declared > maxBytes) throw tooLarge(maxBytes);
  if (!request.body) return "";
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let size = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    size += value.byteLength;
    if (size > maxBytes) {
      await reader.cancel();
      throw tooLarge(maxBytes);
    }
    chunks.push(value);
  }
  const bytes = new Uint8Array(size);
  let at = 0;
  for (const chunk of chunks) {
    bytes.set(chunk, at);
    at += chunk.byteLength;
  }
  try {
    return new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    throw new AppError("invalid_input", "The body is not valid UTF-8 text.");
  }
}

export async function readIngestRows(request: Request, options: ReadIngestRowsOptions): Promise<unknown[]> {
  const format = formatOf(request.headers.get("content-type"));
  const maxBytes = options.maxBytes ?? MAX_INGEST_BODY_BYTES;
  const text = await readText(request, maxBytes);

  let rows: unknown[];
  if (format === "csv") {
    const parsed = parseCsv(text);
    if (!parsed.ok) throw malformed(parsed.message, parsed.position);
    rows = parsed.rows.map(csvConverters[options.kind]);
  } else {
    const parsed = format === "json" ? parseJsonArrayBody(text) : parseNdjsonBody(text);
    if (!parsed.ok) throw malformed(parsed.message, parsed.position);
    rows = parsed.rows;
  }
  if (rows.length > options.maxRows) {
    throw new AppError("too_large", `The body has ${rows.length} rows; at most ${options.maxRows} are accepted per request (Settings → ingest). Split it into several requests.`);
  }
  return rows;
}

function malformed(message: string, position?: { line: number; column: number; offset: number }): AppError {
  return new AppError(
    "invalid_input",
    `The body cannot be read: ${message}`,
    position ? [{ path: "body", message: `line ${position.line}, column ${position.column} (character offset ${position.offset})` }] : [],
  );
}

/** `?atomic=true` (or 1): all rows or none. */
export function atomicParameter(url: URL): boolean {
  const value = url.searchParams.get("atomic");
  if (value === null) return false;
  if (["true", "1"].includes(value.toLowerCase())) return true;
  if (["false", "0", ""].includes(value.toLowerCase())) return false;
  throw new AppError("invalid_input", "atomic must be true or false", [{ path: "atomic", message: "expected true or false" }]);
}
