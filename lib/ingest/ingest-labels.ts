// Ingest of late labels: chargebacks and customer reports that say, weeks or months later, whether
// an alerted transaction really was fraud.
//
// Idempotent per (alert external id, source, reference), the labels table's unique key: the same
// label again is a duplicate, the same key with another label or observation time a conflict. A
// label whose alert has not arrived yet is stored with alert_id NULL, reported as unmatched, and
// matched when the alert is ingested (ingest-alerts.ts). One INSERT … SELECT FROM
// json_to_recordset … ON CONFLICT DO NOTHING per batch, in one transaction with the batch row.
//
// Each accepted label gets its own label.received audit event (one per label, not one per batch):
// a fraud label on an alert that was cleared as legitimate marks a false clear against the reviewer
// who closed it, and an auditor must be able to trace that judgement to the label, its source and
// the request that brought it. Labels arrive in the thousands per day, not millions, so the cost is
// small; duplicates and conflicts change nothing and are only counted in the batch event.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { auditActorOf } from "@/lib/auth/actor";
import { recordAuditEvents } from "@/lib/audit/record-audit-event";
import { labelRowSchema, type LabelRow } from "@/lib/ingest/schemas";
import { validateRows } from "@/lib/ingest/validate-rows";
import {
  closeIngestBatch,
  DEFAULT_PORTFOLIO,
  inBatchTransaction,
  MAX_REPORTED_PROBLEMS,
  openIngestBatch,
  ProblemList,
  type IngestAnswer,
  type IngestCommonOptions,
} from "@/lib/ingest/ingest-batch";

export type IngestLabelsOptions = IngestCommonOptions;

export interface IngestLabelsAnswer extends IngestAnswer {
  /** Accepted labels whose alert has not arrived yet; kept and matched when it does. */
  unmatched: number;
  /** The unmatched labels' rows and external ids (at most MAX_REPORTED_PROBLEMS). */
  unmatchedLabels: { row: number; externalId: string }[];
  rolledBack: boolean;
}

interface Candidate {
  row: number;
  value: LabelRow;
  reference: string;
}

const keyOf = (externalId: string, source: string, reference: string) => JSON.stringify([externalId, source, reference]);
const sameLabel = (a: { label: string; observedAt: Date }, b: { label: string; observedAt: Date }) =>
  a.label === b.label && a.observedAt.getTime() === b.observedAt.getTime();

export async function ingestLabels(db: DbOrTx, options: IngestLabelsOptions): Promise<IngestLabelsAnswer> {
  const { rows, now } = options;
  const offset = options.rowOffset ?? 0;
  const errors = new ProblemList(rows, offset);
  const conflicts = new ProblemList(rows, offset);
  const validation = validateRows(rows, labelRowSchema);
  for (const error of validation.errors) errors.add(error);

  let duplicate = 0;
  const firstByKey = new Map<string, Candidate>();
  const candidates: Candidate[] = [];
  for (const { row, value } of validation.valid) {
    // No reference is stored as "" so that the unique key treats "no reference" as one value.
    const candidate = { row, value, reference: value.reference ?? "" };
    const key = keyOf(value.externalId, value.source, candidate.reference);
    const first = firstByKey.get(key);
    if (!first) {
      firstByKey.set(key, candidate);
      candidates.push(candidate);
    } else if (sameLabel(first.value, value)) {
      duplicate += 1;
    } else {
      conflicts.add({ row, path: "externalId", message: `conflict: row ${first.row + offset} of this request has the same externalId, source and reference with a different label or time` });
    }
  }

  return inBatchTransaction(db, async (tx) => {
    const batchId = await openIngestBatch(tx, { kind: "labels", channel: options.channel, actor: options.actor, fileName: options.fileName, now, rowCount: rows.length });
    let inserted: InsertedLabel[] = [];
    let rolledBack = false;

    if (options.atomic && (errors.rowCount > 0 || conflicts.rowCount > 0)) {
      rolledBack = true;
    } else if (candidates.length > 0) {
      if (options.atomic) await tx.$executeRawUnsafe("SAVEPOINT ingest_labels_rows");
      inserted = await insertLabels(tx, batchId, candidates, now);
      const insertedKeys = new Set(inserted.map((label) => keyOf(label.externalId, label.source, label.reference)));
      const skipped = candidates.filter((candidate) => !insertedKeys.has(keyOf(candidate.value.externalId, candidate.value.source, candidate.reference)));
      if (skipped.length > 0) {
        const stored = await storedLabels(tx, skipped);
        for (const candidate of skipped) {
          const existing = stored.get(keyOf(candidate.value.externalId, candidate.value.source, candidate.reference));
          if (existing && sameLabel(existing, candidate.value)) duplicate += 1;
          else conflicts.add({ row: candidate.row, path: "externalId", message: "conflict: a label with this externalId, source and reference was received earlier with a different label or time; it was kept unchanged" });
        }
      }
      if (options.atomic && conflicts.rowCount > 0) {
        await tx.$executeRawUnsafe("ROLLBACK TO SAVEPOINT ingest_labels_rows");
        rolledBack = true;
        inserted = [];
      }
    }

    const actor = auditActorOf(options.actor);
    // One event per label (each chargeback is evidence on its own), appended as one batch.
    await recordAuditEvents(
      tx,
      inserted.map((label) => ({
        actor,
        event: { action: "label.received" as const, payload: { externalId: label.externalId, label: label.label, source: label.source, matched: label.alertId !== null } },
        subject: label.alertId !== null ? { type: "alert", id: label.alertId } : { type: "label", id: label.id },
        context: options.context,
      })),
    );

    const conflict = conflicts.rowCount;
    const counts = rolledBack
      ? { accepted: 0, duplicate: 0, conflict, rejected: rows.length - conflict }
      : { accepted: inserted.length, duplicate, conflict, rejected: errors.rowCount };
    await closeIngestBatch(tx, {
      batchId,
      kind: "labels",
      channel: options.channel,
      actor: options.actor,
      rowCount: rows.length,
      counts,
      errors: errors.items,
      conflicts: conflicts.items,
      context: options.context,
    });

    const rowByKey = new Map(candidates.map((candidate) => [keyOf(candidate.value.externalId, candidate.value.source, candidate.reference), candidate.row]));
    const unmatchedLabels = inserted
      .filter((label) => label.alertId === null)
      .map((label) => ({ row: rowByKey.get(keyOf(label.externalId, label.source, label.reference))! + offset, externalId: label.externalId }))
      .sort((a, b) => a.row - b.row);
    return {
      batchId,
      ...counts,
      errors: errors.items,
      conflicts: conflicts.items,
      problemsTruncated: errors.truncated || conflicts.truncated,
      unmatched: unmatchedLabels.length,
      unmatchedLabels: unmatchedLabels.slice(0, MAX_REPORTED_PROBLEMS),
      rolledBack,
    };
  });
}

interface InsertedLabel {
  id: string;
  externalId: string;
  source: string;
  reference: string;
  label: "fraud" | "genuine";
  alertId: string | null;
}

async function insertLabels(tx: Prisma.TransactionClient, batchId: string, candidates: Candidate[], now: Date): Promise<InsertedLabel[]> {
  const records = candidates.map(({ value, reference }) => ({
    external_id: value.externalId,
    label: value.label,
    source: value.source,
    observed_at: value.observedAt.toISOString(),
    reference,
  }));
  return tx.$queryRaw<InsertedLabel[]>`
    INSERT INTO labels (portfolio_key, alert_external_id, alert_id, label, source, observed_at, reference, ingest_batch_id, received_at)
    SELECT ${DEFAULT_PORTFOLIO}, r.external_id, a.id, r.label, r.source, r.observed_at, r.reference, ${batchId}::uuid, ${now}
      FROM json_to_recordset(${JSON.stringify(records)}::json)
           AS r(external_id text, label text, source text, observed_at timestamptz, reference text)
      LEFT JOIN alerts a ON a.portfolio_key = ${DEFAULT_PORTFOLIO} AND a.external_id = r.external_id
    ON CONFLICT (portfolio_key, alert_external_id, source, reference) DO NOTHING
    RETURNING id, alert_external_id AS "externalId", source, reference, label, alert_id AS "alertId"`;
}

async function storedLabels(tx: Prisma.TransactionClient, candidates: Candidate[]): Promise<Map<string, { label: string; observedAt: Date }>> {
  const keys = candidates.map(({ value, reference }) => ({ external_id: value.externalId, source: value.source, reference }));
  const rows = await tx.$queryRaw<{ externalId: string; source: string; reference: string; label: string; observedAt: Date }[]>`
    SELECT l.alert_external_id AS "externalId", l.source, l.reference, l.label, l.observed_at AS "observedAt"
      FROM labels l
      JOIN json_to_recordset(${JSON.stringify(keys)}::json) AS k(external_id text, source text, reference text)
        ON l.portfolio_key = ${DEFAULT_PORTFOLIO} AND l.alert_external_id = k.external_id AND l.source = k.source AND l.reference = k.reference`;
  return new Map(rows.map((row) => [keyOf(row.externalId, row.source, row.reference), row]));
}
