// An export job: records a label_exports row (running), streams the rows into a file under
// .exports/ (kept for download) or into a caller's stream (the API), reports progress on the row,
// and finally marks it done — with its label_export.generated audit event in the same transaction —
// or failed. createLabelExport() returns as soon as the row exists; `completion` settles when the
// job ends, so a screen can start a long export and show its progress while it runs.
import "server-only";
import { createWriteStream } from "node:fs";
import { mkdir, rename, rm, stat } from "node:fs/promises";
import path from "node:path";
import type { Writable } from "node:stream";
import { finished } from "node:stream/promises";
import type pg from "pg";
import type { Prisma, PrismaClient } from "@/lib/generated/prisma/client";
import { AppError, isAppError } from "@/lib/errors";
import { auditActorOf, type ApiClientActor, type UserActor } from "@/lib/auth/actor";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { writeLabelExport } from "@/lib/exports/stream-label-export";
import { choicesRecord, FORMAT_EXTENSION, labelExportChoicesSchema, type LabelExportChoices } from "@/lib/exports/schemas";

export interface ExportHandles {
  prisma: PrismaClient;
  /** For the cursor: the export reads on one connection of this pool. */
  pool: pg.Pool;
}

export type LabelExportDestination =
  /** Written under `directory` (default `.exports/` in the working directory) and kept for download. */
  | { kind: "file"; directory?: string }
  /** Streamed into `sink`, which the job ends on success and destroys on failure; no file is kept. */
  | { kind: "stream"; sink: Writable };

export interface CreateLabelExportOptions {
  actor: UserActor | ApiClientActor;
  /** Unparsed: validated here against labelExportChoicesSchema. */
  choices: unknown;
  now: Date;
  destination: LabelExportDestination;
  context?: AuditContext;
  /** Least time between two progress updates of the row (default one second). */
  progressIntervalMs?: number;
  batchSize?: number;
  rowGroupRows?: number;
}

export interface FinishedLabelExport {
  exportId: string;
  status: "done" | "failed";
  rowCount: number;
  fileBytes: number | null;
  error: string | null;
}

export interface StartedLabelExport {
  exportId: string;
  /** Base name of the kept file (under the export directory), or null for a streamed export. */
  fileName: string | null;
  choices: LabelExportChoices;
  /** Settles (never rejects) when the job has marked the export done or failed. */
  completion: Promise<FinishedLabelExport>;
}

/** Where kept exports live: git-ignored, next to the app. */
export function defaultLabelExportDirectory(): string {
  return path.resolve(process.cwd(), ".exports");
}

/** label-export-<asOf date>-<export id>.<ext>: unique, and tells a person which export it is. */
export function labelExportFileName(exportId: string, choices: Pick<LabelExportChoices, "asOf" | "format">): string {
  return `label-export-${choices.asOf.toISOString().slice(0, 10).replaceAll("-", "")}-${exportId}.${FORMAT_EXTENSION[choices.format]}`;
}

export async function parseLabelExportChoices(prisma: PrismaClient | Prisma.TransactionClient, options: { choices: unknown; now: Date }) {
  const parsed = labelExportChoicesSchema.safeParse(options.choices);
  if (!parsed.success) {
    throw new AppError(
      "invalid_input",
      "The export's choices are not valid.",
      parsed.error.issues.map((issue) => ({ path: issue.path.join("."), message: issue.message })),
    );
  }
  const choices = parsed.data;
  if (choices.asOf > options.now) {
    // A future as-of would not be reproducible: labels could still arrive before it.
    throw new AppError("invalid_input", "The as-of time is in the future.", [{ path: "asOf", message: "must not be later than now" }]);
  }
  const modelVersions = await prisma.modelVersion.findMany({
    where: { id: { in: choices.modelVersionIds } },
    select: { id: true, modelName: true, version: true },
    orderBy: [{ modelName: "asc" }, { version: "asc" }],
  });
  const missing = choices.modelVersionIds.filter((id) => !modelVersions.some((version) => version.id === id));
  if (missing.length > 0) {
    throw new AppError("invalid_input", "Unknown model version.", missing.map((id) => ({ path: "modelVersionIds", message: `no model version with id ${id}` })));
  }
  return { choices, modelVersions };
}

export async function createLabelExport(handles: ExportHandles, options: CreateLabelExportOptions): Promise<StartedLabelExport> {
  const { prisma } = handles;
  const { choices, modelVersions } = await parseLabelExportChoices(prisma, options);
  const record = choicesRecord(choices, modelVersions);
  const created = await prisma.labelExport.create({
    data: {
      requestedById: options.actor.type === "user" ? options.actor.id : null,
      apiClientId: options.actor.type === "api_client" ? options.actor.id : null,
      requestedAt: options.now,
      choices: record as Prisma.InputJsonValue,
      format: choices.format,
      status: "running",
      progressAt: options.now,
    },
    select: { id: true },
  });
  const exportId = created.id;
  const fileName = options.destination.kind === "file" ? labelExportFileName(exportId, choices) : null;
  if (fileName) await prisma.labelExport.update({ where: { id: exportId }, data: { fileName } });
  const completion = runExport(handles, { ...options, exportId, fileName, choices, record });
  return { exportId, fileName, choices, completion };
}

interface RunOptions extends CreateLabelExportOptions {
  exportId: string;
  fileName: string | null;
  choices: LabelExportChoices;
  record: Record<string, unknown>;
}

async function runExport(handles: ExportHandles, options: RunOptions): Promise<FinishedLabelExport> {
  const { prisma, pool } = handles;
  const { exportId, choices, destination } = options;
  const directory = destination.kind === "file" ? (destination.directory ?? defaultLabelExportDirectory()) : null;
  const finalPath = directory && options.fileName ? path.join(directory, options.fileName) : null;
  const partPath = finalPath ? `${finalPath}.part` : null;
  let sink: Writable | null = null;
  let sinkError: Error | undefined;
  let rowCount = 0;
  try {
    if (partPath && directory) {
      await mkdir(directory, { recursive: true });
      sink = createWriteStream(partPath);
    } else {
      sink = (destination as { sink: Writable }).sink;
    }
    // Kept so that a failing output (a full disk) reports its own error instead of "closed", and so
    // that an 'error' event between two writes is never an unhandled one.
    sink.on("error", (error) => {
      sinkError ??= error;
    });
    const interval = options.progressIntervalMs ?? 1_000;
    let lastUpdate = performance.now();
    const result = await writeLabelExport(pool, {
      choices,
      sink,
      batchSize: options.batchSize,
      rowGroupRows: options.rowGroupRows,
      metadata: { "triage_desk.export_id": exportId, "triage_desk.choices": JSON.stringify(options.record) },
      onCount: async (expected) => {
        await prisma.labelExport.update({ where: { id: exportId }, data: { expectedRowCount: expected, progressAt: new Date() } });
      },
      onProgress: async (written) => {
        rowCount = written;
        if (performance.now() - lastUpdate < interval) return;
        lastUpdate = performance.now();
        await prisma.labelExport.update({ where: { id: exportId }, data: { rowCount: written, progressAt: new Date() } });
      },
    });
    rowCount = result.rowCount;
    sink.end();
    // The writable side only: for a pass-through to an HTTP response, "all bytes handed over".
    await finished(sink, { readable: false });
    let fileBytes: number | null = null;
    if (partPath && finalPath) {
      await rename(partPath, finalPath);
      fileBytes = (await stat(finalPath)).size;
    }
    await prisma.$transaction(async (tx) => {
      await tx.labelExport.update({
        where: { id: exportId },
        data: { status: "done", rowCount, fileBytes: fileBytes === null ? null : BigInt(fileBytes), finishedAt: new Date(), progressAt: new Date() },
      });
      await recordAuditEvent(tx, {
        actor: auditActorOf(options.actor),
        event: { action: "label_export.generated", payload: { exportId, choices: options.record, rowCount, format: choices.format } },
        subject: { type: "label_export", id: exportId },
        context: options.context,
      });
    });
    return { exportId, status: "done", rowCount, fileBytes, error: null };
  } catch (caught) {
    const error = sinkError ?? caught;
    // Expected failures (an abandoned download) keep their message; anything else is logged here
    // and stored as a reference, never as an SQL text or a stack.
    const message = isAppError(error) ? error.message : `The export failed on the server (reference ${exportId}).`;
    if (!isAppError(error)) console.error(`label export ${exportId} failed:`, error);
    // Destroyed with an error, so that a reader of a streamed export sees a broken download, never
    // a shorter file that looks complete.
    if (sink && !sink.destroyed) sink.destroy(new Error(message));
    if (partPath) await rm(partPath, { force: true }).catch(() => undefined);
    await prisma.labelExport
      .update({ where: { id: exportId }, data: { status: "failed", rowCount, error: message, finishedAt: new Date(), progressAt: new Date() } })
      .catch((updateError: unknown) => console.error(`label export ${exportId}: could not mark it failed:`, updateError));
    return { exportId, status: "failed", rowCount, fileBytes: null, error: message };
  }
}
