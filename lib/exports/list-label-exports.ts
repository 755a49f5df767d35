// Past and running label exports for the Label exports screen, newest first, with progress.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";

/** A running export that has not reported progress for this long has stopped (its server restarted). */
export const STALLED_AFTER_MS = 2 * 60_000;

export interface LabelExportListItem {
  id: string;
  requestedAt: Date;
  requestedBy: string;
  format: string;
  status: "running" | "done" | "failed";
  /** Running and silent for longer than STALLED_AFTER_MS. */
  stalled: boolean;
  rowCount: number;
  expectedRowCount: number | null;
  /** 0–1 while running, when the expected count is known. */
  progress: number | null;
  fileName: string | null;
  fileBytes: number | null;
  finishedAt: Date | null;
  error: string | null;
  choices: Record<string, unknown>;
}

export async function listLabelExports(db: DbOrTx, options: { now: Date; limit?: number }): Promise<LabelExportListItem[]> {
  const rows = await db.labelExport.findMany({
    orderBy: { requestedAt: "desc" },
    take: options.limit ?? 50,
    include: { requestedBy: { select: { displayName: true } }, apiClient: { select: { name: true } } },
  });
  return rows.map((row) => {
    const status = row.status as LabelExportListItem["status"];
    const lastSign = row.progressAt ?? row.requestedAt;
    return {
      id: row.id,
      requestedAt: row.requestedAt,
      requestedBy: row.requestedBy?.displayName ?? (row.apiClient ? `API client ${row.apiClient.name}` : "—"),
      format: row.format,
      status,
      stalled: status === "running" && options.now.getTime() - lastSign.getTime() > STALLED_AFTER_MS,
      rowCount: row.rowCount,
      expectedRowCount: row.expectedRowCount,
      progress: status === "running" && row.expectedRowCount ? Math.min(1, row.rowCount / row.expectedRowCount) : null,
      fileName: row.fileName,
      fileBytes: row.fileBytes === null ? null : Number(row.fileBytes),
      finishedAt: row.finishedAt,
      error: row.error,
      choices: (row.choices ?? {}) as Record<string, unknown>,
    };
  });
}
