// The kept file of a finished label export, for the download route.
import "server-only";
import { createReadStream } from "node:fs";
import { stat } from "node:fs/promises";
import path from "node:path";
import type { Readable } from "node:stream";
import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { defaultLabelExportDirectory } from "@/lib/exports/create-label-export";
import { FORMAT_MEDIA_TYPE, type ExportFormat } from "@/lib/exports/schemas";

// The names createLabelExport() gives files; anything else in the row is refused, never joined to a path.
const FILE_NAME = /^label-export-\d{8}-[0-9a-f-]{36}\.(csv|jsonl|parquet)$/;

export interface OpenLabelExportFileOptions {
  exportId: string;
  directory?: string;
}

export interface OpenedLabelExportFile {
  stream: Readable;
  fileName: string;
  contentType: string;
  bytes: number;
  rowCount: number;
}

export async function openLabelExportFile(db: DbOrTx, options: OpenLabelExportFileOptions): Promise<OpenedLabelExportFile> {
  const found = /^[0-9a-f-]{36}$/i.test(options.exportId) ? await db.labelExport.findUnique({ where: { id: options.exportId } }) : null;
  if (!found) throw new AppError("not_found", "No label export with that id.");
  if (found.status !== "done") throw new AppError("conflict", found.status === "running" ? "The export is still running." : "The export failed; it has no file.");
  if (!found.fileName) throw new AppError("not_found", "This export was streamed to its caller and kept no file.");
  if (!FILE_NAME.test(found.fileName)) throw new AppError("not_found", "The export's file name is not one this app writes.");
  const filePath = path.join(options.directory ?? defaultLabelExportDirectory(), found.fileName);
  const size = await stat(filePath).then(
    (info) => info.size,
    () => null,
  );
  if (size === null) throw new AppError("not_found", "The export's file is no longer on this server.");
  return {
    stream: createReadStream(filePath),
    fileName: found.fileName,
    contentType: FORMAT_MEDIA_TYPE[found.format as ExportFormat] ?? "application/octet-stream",
    bytes: size,
    rowCount: found.rowCount,
  };
}
