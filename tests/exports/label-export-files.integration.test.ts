// The files of a label export and the job that makes them: CSV quoting, JSON Lines, a Parquet file
// read back by an independent reader, the label_exports row and its audit event.
import { mkdtemp, readdir, readFile, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { tableFromIPC } from "apache-arrow";
import { parquetMetadata } from "hyparquet";
import { readParquet } from "parquet-wasm";
import { afterAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createLabelExport } from "@/lib/exports/create-label-export";
import { csvField, csvRecord } from "@/lib/exports/label-export-writers";
import { LABEL_EXPORT_COLUMNS, LABEL_EXPORT_DICTIONARY, labelExportChoicesSchema, labelExportRowSchema, type LabelExportChoicesInput } from "@/lib/exports/schemas";
import { writeLabelExport } from "@/lib/exports/stream-label-export";
import {
  at,
  choicesFor,
  collectingSink,
  createAlert,
  createApiClientActor,
  createLabel,
  createModelVersion,
  createOutcome,
  createPerson,
  csvObjects,
  parseCsv,
} from "@/tests/exports/export-fixtures";

const database = await useTestDatabase();
const handles = { prisma: database.prisma, pool: database.pool };
const directory = await mkdtemp(path.join(tmpdir(), "label-exports-"));
afterAll(() => rm(directory, { recursive: true, force: true }));

const NOW = at("2026-07-01T00:00:00Z");
const AS_OF = at("2026-06-01T00:00:00Z");

async function exportBytes(input: LabelExportChoicesInput, rowGroupRows?: number): Promise<Buffer> {
  const { sink, bytes } = collectingSink();
  await writeLabelExport(database.pool, { choices: labelExportChoicesSchema.parse(input), sink, batchSize: 2, rowGroupRows });
  sink.end();
  return bytes();
}

/** A model version with rows that exercise every column: nulls, both label sources, a second
 * review, a below-the-line sample, awkward text and non-ASCII text. */
async function mixedScenario(): Promise<{ modelVersionId: string; externalIds: string[] }> {
  const version = await createModelVersion(database.pool, { modelName: "card-gbm, \"v\"" });
  const reviewer = await createPerson(database.pool);
  const second = await createPerson(database.pool, { role: "supervisor" });
  const externalIds: string[] = [];
  const add = async (index: number, overrides: Parameters<typeof createAlert>[2]) => {
    const alert = await createAlert(database.pool, version.id, { externalId: `mix-${version.version}-${index}`, ...overrides });
    externalIds.push(alert.externalId);
    return alert;
  };
  const plain = await add(1, { occurredAt: at("2026-01-01T08:00:00.123Z"), amountMinor: 9_999_999_999_999 });
  await createOutcome(database.pool, plain.id, reviewer, { outcome: "confirmed_fraud", closedAt: at("2026-01-01T09:30:00.456Z") });
  const awkward = await add(2, { occurredAt: at("2026-01-02T00:00:00Z"), channel: "odd,\"channel\"\r\nline", externalId: `mix-${version.version}-2,"q"\nx`, probability: null });
  await createOutcome(database.pool, awkward.id, reviewer, { outcome: "legitimate", closedAt: at("2026-01-03T00:00:00Z") });
  await createLabel(database.pool, awkward, { label: "fraud", source: "chargeback", observedAt: at("2026-02-01T00:00:00Z"), receivedAt: at("2026-02-03T00:00:00Z") });
  const sampled = await add(3, { occurredAt: at("2026-01-03T00:00:00Z"), belowTheLine: true, inclusionProbability: 0.05, score: 0.123456789, channel: "café ☕" });
  await createOutcome(database.pool, sampled.id, reviewer, { outcome: "inconclusive", closedAt: at("2026-01-04T00:00:00Z") });
  const reviewed = await add(4, { occurredAt: at("2026-01-04T00:00:00Z"), state: "closed", finalOutcome: "confirmed_fraud", currency: "JPY", amountMinor: 0 });
  await createOutcome(database.pool, reviewed.id, reviewer, { outcome: "legitimate", closedAt: at("2026-01-05T00:00:00Z") });
  await createOutcome(database.pool, reviewed.id, second, { outcome: "confirmed_fraud", closedAt: at("2026-01-06T00:00:00Z"), round: 2 });
  await add(5, { occurredAt: at("2026-01-05T00:00:00Z") }); // never reviewed
  return { modelVersionId: version.id, externalIds };
}

describe("CSV (RFC 4180)", () => {
  it("quotes fields with commas, quotes or line breaks, doubles inner quotes and leaves other fields bare", () => {
    // RFC 4180 §2 rule 5: fields may be enclosed in double quotes; bare fields must not contain them.
    expect(csvField("plain")).toBe("plain");
    expect(csvField("")).toBe("");
    expect(csvField(null)).toBe("");
    expect(csvField(0.05)).toBe("0.05");
    expect(csvField(true)).toBe("true");
    // Rule 6: fields containing line breaks (CRLF), double quotes or commas are enclosed in double quotes.
    expect(csvField("a,b")).toBe('"a,b"');
    expect(csvField("line\r\nbreak")).toBe('"line\r\nbreak"');
    expect(csvField("lone\nLF")).toBe('"lone\nLF"');
    expect(csvField("lone\rCR")).toBe('"lone\rCR"');
    // Rule 7: a double quote inside a quoted field is escaped by preceding it with another double quote.
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    // Rule 1: records end with CRLF; rule 4: fields are separated by commas, spaces are part of a field.
    expect(csvRecord([" a ", 1, null, "b"])).toBe(" a ,1,,b\r\n");
  });

  it("writes a header and one CRLF-terminated record per row that a strict reader reads back unchanged", async () => {
    const { modelVersionId, externalIds } = await mixedScenario();
    const text = (await exportBytes(choicesFor(modelVersionId, { asOf: AS_OF, keepInconclusive: true, keepUnreviewed: true }))).toString("utf8");
    const records = parseCsv(text);
    expect(records[0]).toEqual(LABEL_EXPORT_COLUMNS); // rule 3: the header names every field
    expect(records.slice(1).map((record) => record.length)).toEqual([24, 24, 24, 24, 24]);
    expect(text.endsWith("\r\n")).toBe(true);
    const rows = csvObjects(text);
    expect(rows.map((row) => row.external_id)).toEqual(externalIds);
    expect(rows[1]).toMatchObject({ channel: 'odd,"channel"\r\nline', model_name: 'card-gbm, "v"', probability: "", label: "1", label_source: "chargeback", overrides_outcome: "true" });
    expect(text).toContain('"odd,""channel""\r\nline"');
    expect(rows[0]).toMatchObject({ amount_minor: "9999999999999", occurred_at: "2026-01-01T08:00:00.123Z", closed_at: "2026-01-01T09:30:00.456Z", label: "1", weight: "1" });
    expect(rows[2]).toMatchObject({ channel: "café ☕", label: "", label_source: "", outcome: "inconclusive", below_the_line: "true", inclusion_probability: "0.05", weight: "20", score: "0.123456789" });
    expect(rows[3]).toMatchObject({ outcome: "confirmed_fraud", second_review: "true", currency: "JPY", amount_minor: "0" });
    expect(rows[4]).toMatchObject({ outcome: "", reviewer_id: "", closed_at: "" });
  });

  it("writes only the header when no alert matches", async () => {
    const version = await createModelVersion(database.pool);
    expect((await exportBytes(choicesFor(version.id, { asOf: AS_OF }))).toString("utf8")).toBe(`${LABEL_EXPORT_COLUMNS.join(",")}\r\n`);
  });
});

describe("JSON Lines", () => {
  it("writes one object per line with the same values as the CSV and null for empty ones", async () => {
    const { modelVersionId } = await mixedScenario();
    const choices = choicesFor(modelVersionId, { asOf: AS_OF, keepInconclusive: true, keepUnreviewed: true });
    const lines = (await exportBytes({ ...choices, format: "jsonl" })).toString("utf8").split("\n");
    expect(lines.pop()).toBe("");
    const objects = lines.map((line) => labelExportRowSchema.parse(JSON.parse(line)));
    expect(Object.keys(JSON.parse(lines[0]))).toEqual(LABEL_EXPORT_COLUMNS);
    const csv = csvObjects((await exportBytes(choices)).toString("utf8"));
    expect(objects.map((object) => Object.fromEntries(LABEL_EXPORT_COLUMNS.map((column) => [column, object[column] === null ? "" : String(object[column])])))).toEqual(csv);
  });
});

describe("Apache Parquet", () => {
  /** Every value as the CSV writes it, from what an independent reader (Apache Arrow's Rust Parquet
   * implementation, compiled to WebAssembly in parquet-wasm) decoded. */
  function parquetAsCsvObjects(bytes: Buffer): { rows: Record<string, string>[]; types: Record<string, string>; metadata: Map<string, string> } {
    const table = tableFromIPC(readParquet(new Uint8Array(bytes)).intoIPCStream());
    const types = Object.fromEntries(table.schema.fields.map((field) => [field.name, `${field.type}${field.nullable ? "?" : ""}`]));
    const rows = table.toArray().map((record: Record<string, unknown>) => {
      const row: Record<string, string> = {};
      for (const column of LABEL_EXPORT_COLUMNS) {
        const value = record[column];
        row[column] = value === null || value === undefined ? "" : LABEL_EXPORT_DICTIONARY[column].type === "timestamp" ? new Date(Number(value)).toISOString() : String(value);
      }
      return row;
    });
    return { rows, types, metadata: table.schema.metadata };
  }

  it("is read back by an independent reader as exactly the CSV of the same export, over several row groups", async () => {
    const { modelVersionId } = await mixedScenario();
    const choices = choicesFor(modelVersionId, { asOf: AS_OF, keepInconclusive: true, keepUnreviewed: true });
    const csv = csvObjects((await exportBytes(choices)).toString("utf8"));
    const parquet = parquetAsCsvObjects(await exportBytes({ ...choices, format: "parquet" }, 2));
    expect(parquet.rows).toEqual(csv);
    expect(parquet.types).toMatchObject({
      alert_id: "Utf8",
      amount_minor: "Int64",
      score: "Float64",
      probability: "Float64?",
      occurred_at: "Timestamp<MILLISECOND, UTC>",
      closed_at: "Timestamp<MILLISECOND, UTC>?",
      label: "Int32?",
      overrides_outcome: "Bool",
      weight: "Float64",
    });
  });

  it("writes a file with the schema and no rows when no alert matches", async () => {
    const version = await createModelVersion(database.pool);
    const bytes = await exportBytes(choicesFor(version.id, { asOf: AS_OF, format: "parquet" }));
    // Read with hyparquet here: hyparquet-writer 0.17.0 encodes the empty row-group list with a Thrift
    // element type that Arrow's Rust reader refuses (a zero-row file only; see DEVELOPERS.md).
    const buffer = bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer;
    const metadata = parquetMetadata(buffer);
    expect(metadata.num_rows).toBe(0n);
    expect(metadata.schema.slice(1).map((element) => element.name)).toEqual(LABEL_EXPORT_COLUMNS);
  });
});

describe("the export job", () => {
  it("records the export, writes the file, marks it done and audits it with its choices and row count", async () => {
    const { modelVersionId } = await mixedScenario();
    const supervisor = await createPerson(database.pool, { role: "supervisor" });
    const started = await createLabelExport(handles, {
      actor: supervisor.actor,
      choices: choicesFor(modelVersionId, { asOf: AS_OF, maturityDays: 120, format: "parquet" }),
      now: NOW,
      destination: { kind: "file", directory },
      progressIntervalMs: 0,
      batchSize: 1,
    });
    const running = await database.prisma.labelExport.findUniqueOrThrow({ where: { id: started.exportId } });
    expect(running).toMatchObject({ status: "running", requestedById: supervisor.id, format: "parquet", fileName: started.fileName });
    expect(started.fileName).toBe(`label-export-20260601-${started.exportId}.parquet`);

    const result = await started.completion;
    expect(result).toMatchObject({ status: "done", rowCount: 3, error: null });
    const row = await database.prisma.labelExport.findUniqueOrThrow({ where: { id: started.exportId } });
    expect(row).toMatchObject({ status: "done", rowCount: 3, expectedRowCount: 3, fileBytes: BigInt(result.fileBytes ?? -1) });
    expect(row.finishedAt).not.toBeNull();
    expect(row.choices).toMatchObject({ modelVersionIds: [modelVersionId], asOf: "2026-06-01T00:00:00.000Z", maturityDays: 120, maturityCutoff: "2026-02-01T00:00:00.000Z", format: "parquet" });
    const file = await readFile(path.join(directory, started.fileName ?? ""));
    expect(file.length).toBe(result.fileBytes);
    expect((await readdir(directory)).filter((name) => name.endsWith(".part"))).toEqual([]);
    const table = tableFromIPC(readParquet(new Uint8Array(file)).intoIPCStream());
    expect(table.numRows).toBe(3);
    expect(JSON.parse(table.schema.metadata.get("triage_desk.choices") ?? "{}")).toEqual(row.choices);

    const events = await database.prisma.auditEvent.findMany({ where: { subjectType: "label_export", subjectId: started.exportId } });
    expect(events).toHaveLength(1);
    expect(events[0]).toMatchObject({ action: "label_export.generated", actorType: "user", actorId: supervisor.id });
    expect(events[0].payload).toEqual({ exportId: started.exportId, choices: row.choices, rowCount: 3, format: "parquet" });
  });

  it("streams an API export to the caller, keeps no file and records the API client", async () => {
    const { modelVersionId } = await mixedScenario();
    const client = await createApiClientActor(database.pool);
    const { sink, text } = collectingSink();
    const started = await createLabelExport(handles, {
      actor: client,
      choices: choicesFor(modelVersionId, { asOf: AS_OF, format: "jsonl" }),
      now: NOW,
      destination: { kind: "stream", sink },
    });
    expect(started.fileName).toBeNull();
    const result = await started.completion;
    expect(result).toMatchObject({ status: "done", rowCount: 3, fileBytes: null });
    expect(text().trim().split("\n")).toHaveLength(3);
    expect(sink.writableFinished).toBe(true);
    const row = await database.prisma.labelExport.findUniqueOrThrow({ where: { id: started.exportId } });
    expect(row).toMatchObject({ status: "done", apiClientId: client.id, requestedById: null, fileName: null, rowCount: 3 });
    const [event] = await database.prisma.auditEvent.findMany({ where: { subjectId: started.exportId } });
    expect(event).toMatchObject({ action: "label_export.generated", actorType: "api_client", actorLabel: `api:${client.name}` });
  });

  it("marks an export failed, audits nothing and breaks the stream when the reader goes away", async () => {
    const { modelVersionId } = await mixedScenario();
    const client = await createApiClientActor(database.pool);
    const { sink } = collectingSink();
    const errors: Error[] = [];
    sink.on("error", (error) => errors.push(error));
    sink.once("data", () => sink.destroy());
    const started = await createLabelExport(handles, {
      actor: client,
      choices: choicesFor(modelVersionId, { asOf: AS_OF, keepUnreviewed: true, keepInconclusive: true }),
      now: NOW,
      destination: { kind: "stream", sink },
      batchSize: 1,
    });
    const result = await started.completion;
    expect(result.status).toBe("failed");
    expect(result.error).toMatch(/closed before the export finished/);
    const row = await database.prisma.labelExport.findUniqueOrThrow({ where: { id: started.exportId } });
    expect(row).toMatchObject({ status: "failed", error: result.error });
    expect(row.finishedAt).not.toBeNull();
    expect(await database.prisma.auditEvent.count({ where: { subjectId: started.exportId } })).toBe(0);
  });

  it("refuses an as-of time in the future, an unknown model version and an empty range, naming the field", async () => {
    const version = await createModelVersion(database.pool);
    const supervisor = await createPerson(database.pool, { role: "supervisor" });
    const attempt = (choices: unknown) => createLabelExport(handles, { actor: supervisor.actor, choices, now: NOW, destination: { kind: "file", directory } });
    await expect(attempt(choicesFor(version.id, { asOf: at("2026-07-02T00:00:00Z") }))).rejects.toMatchObject({ code: "invalid_input", issues: [{ path: "asOf" }] });
    await expect(attempt(choicesFor("7a1c1e0e-3b7e-4c4e-9d0e-2f4a5b6c7d8e", { asOf: AS_OF }))).rejects.toMatchObject({ code: "invalid_input", issues: [{ path: "modelVersionIds" }] });
    await expect(attempt(choicesFor(version.id, { asOf: AS_OF, occurredFrom: at("2026-02-01T00:00:00Z"), occurredTo: at("2026-02-01T00:00:00Z") }))).rejects.toMatchObject({
      code: "invalid_input",
      issues: [{ path: "occurredTo" }],
    });
    await expect(attempt({ ...choicesFor(version.id, { asOf: AS_OF }), format: "xlsx" })).rejects.toMatchObject({ code: "invalid_input", issues: [{ path: "format" }] });
    expect(await database.prisma.labelExport.count({ where: { requestedById: supervisor.id } })).toBe(0);
  });
});
