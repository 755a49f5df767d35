// Ingest of scored alerts from the scoring service, an upload, the command line or the demo.
//
// Rows are validated in JavaScript (card-number guard, zod, model version, score range), priced
// with deriveRiskFields, then written set-based: one INSERT … SELECT FROM json_to_recordset(one
// parameter) … ON CONFLICT DO NOTHING, so a batch is a single statement whatever its size (no
// 65,535-parameter limit to chunk around). Rows the insert skipped already existed: the same
// content hash makes them duplicates, a different one conflicts. The batch row, its audit event and
// the matching of labels that arrived before their alerts commit in the same transaction as the
// alerts, so a failure anywhere leaves none of the batch behind.
import "server-only";
import { z } from "zod";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { isRootClient } from "@/lib/db/in-transaction";
import { deriveRiskFields, type DeriveRiskFieldsInput, type DerivedRiskFields } from "@/lib/alerts/derive-risk-fields";
import { assertIsotonicCalibrationMap, type ScoreKind } from "@/lib/risk";
import { getSettings } from "@/lib/settings/get-settings";
import type { Settings } from "@/lib/settings/schemas";
import { alertContentHash } from "@/lib/ingest/content-hash";
import { alertRowSchema, type AlertRow } from "@/lib/ingest/schemas";
import { validateRows } from "@/lib/ingest/validate-rows";
import {
  closeIngestBatch,
  DEFAULT_PORTFOLIO,
  inBatchTransaction,
  openIngestBatch,
  ProblemList,
  type IngestAnswer,
  type IngestCommonOptions,
} from "@/lib/ingest/ingest-batch";

export interface IngestAlertsOptions extends IngestCommonOptions {
  /** Back-fills and the demo may give each row a past `receivedAt` (ISO 8601 with offset); others get `now`. */
  allowReceivedAt?: boolean;
}

export interface IngestAlertsAnswer extends IngestAnswer {
  /** Labels that had arrived before their alert and were matched to an alert of this batch. */
  labelsMatched: number;
  /** Atomic request that stored nothing because some row was rejected or conflicted. */
  rolledBack: boolean;
}

interface KnownModelVersion {
  id: string;
  modelName: string;
  version: string;
  scoreKind: ScoreKind;
  negativeSamplingRate: number;
  priorHitRate: number | null;
  calibrationMap: DeriveRiskFieldsInput["calibrationMap"];
}

interface PricedAlert {
  row: number;
  value: AlertRow;
  contentHash: string;
  receivedAt: Date;
  modelVersionId: string;
  risk: DerivedRiskFields;
}

const receivedAtSchema = z.iso.datetime({ offset: true });

async function loadModelVersions(db: DbOrTx): Promise<Map<string, KnownModelVersion>> {
  // The registry is small (tens of versions); reading it whole is one cheap query.
  const rows = await db.$queryRaw<
    {
      id: string;
      modelName: string;
      version: string;
      scoreKind: ScoreKind;
      negativeSamplingRate: number;
      priorHitRate: number | null;
      mapId: string | null;
      scorePoints: number[] | null;
      probabilityPoints: number[] | null;
    }[]
  >`
    SELECT m.id, m.model_name AS "modelName", m.version, m.score_kind AS "scoreKind",
           m.negative_sampling_rate AS "negativeSamplingRate", m.prior_hit_rate AS "priorHitRate",
           c.id AS "mapId", c.score_points AS "scorePoints", c.probability_points AS "probabilityPoints"
      FROM model_versions m
      LEFT JOIN LATERAL (
        SELECT id, score_points, probability_points FROM calibration_maps
         WHERE model_version_id = m.id ORDER BY fitted_at DESC LIMIT 1
      ) c ON true`;
  const byName = new Map<string, KnownModelVersion>();
  for (const row of rows) {
    const calibrationMap =
      row.mapId === null
        ? null
        : { id: row.mapId, ...assertIsotonicCalibrationMap({ scores: row.scorePoints ?? [], probabilities: row.probabilityPoints ?? [] }) };
    byName.set(modelKey(row.modelName, row.version), { ...row, calibrationMap });
  }
  return byName;
}

function modelKey(modelName: string, version: string): string {
  return JSON.stringify([modelName, version]);
}

/** What pricing a row needs from the database: read once per call, or once per file by ingestAlertBatches. */
export interface AlertIngestContext {
  settings: Settings;
  modelVersions: Map<string, KnownModelVersion>;
}

export async function loadAlertIngestContext(db: DbOrTx): Promise<AlertIngestContext> {
  const [settings, modelVersions] = await Promise.all([getSettings(db), loadModelVersions(db)]);
  return { settings, modelVersions };
}

/** A batch validated and priced in memory, ready to store. */
export interface PreparedAlerts {
  rowCount: number;
  errors: ProblemList;
  conflicts: ProblemList;
  candidates: PricedAlert[];
  duplicate: number;
}

export type PrepareAlertsOptions = Pick<IngestAlertsOptions, "rows" | "now" | "allowReceivedAt" | "rowOffset">;

/**
 * Validation, the card-number guard and pricing: JavaScript only, no I/O, so a caller can prepare
 * the next batch while the database stores the previous one.
 */
export function prepareAlerts(context: AlertIngestContext, options: PrepareAlertsOptions): PreparedAlerts {
  const { rows, now } = options;
  const { settings, modelVersions } = context;

  const errors = new ProblemList(rows, options.rowOffset ?? 0);
  const validation = validateRows(rows, alertRowSchema({ channels: settings.ingest.channels }));
  for (const error of validation.errors) errors.add(error);

  const priced: PricedAlert[] = [];
  for (const { row, value } of validation.valid) {
    let receivedAt = now;
    const rawReceivedAt = (rows[row] as Record<string, unknown>).receivedAt;
    if (options.allowReceivedAt && rawReceivedAt !== undefined && rawReceivedAt !== null) {
      if (!receivedAtSchema.safeParse(rawReceivedAt).success) {
        errors.add({ row, path: "receivedAt", message: "expected an ISO 8601 date-time with a UTC offset, e.g. 2025-03-01T14:05:00Z" });
        continue;
      }
      receivedAt = new Date(rawReceivedAt as string);
      if (receivedAt.getTime() > now.getTime()) {
        errors.add({ row, path: "receivedAt", message: "must not be later than the time of the upload" });
        continue;
      }
    }
    const model = modelVersions.get(modelKey(value.modelName, value.modelVersion));
    if (!model) {
      errors.add({
        row,
        path: "modelVersion",
        message: `unknown model version ${value.modelName} ${value.modelVersion}: an admin registers it first (Settings, or POST /api/v1/model-versions)`,
      });
      continue;
    }
    if (model.scoreKind === "probability" && !(value.score >= 0 && value.score <= 1)) {
      errors.add({ row, path: "score", message: `must be from 0 to 1: ${value.modelName} ${value.modelVersion} gives probability scores` });
      continue;
    }
    let risk: DerivedRiskFields;
    try {
      risk = deriveRiskFields({
        alert: { amountMinor: value.amountMinor, channel: value.channel, score: value.score, receivedAt },
        modelVersion: model,
        calibrationMap: model.calibrationMap,
        settings,
      });
    } catch (error) {
      if (!(error instanceof RangeError)) throw error;
      errors.add({ row, path: "", message: `cannot compute the risk fields: ${error.message}` });
      continue;
    }
    priced.push({ row, value, contentHash: alertContentHash(value), receivedAt, modelVersionId: model.id, risk });
  }

  // The same external id twice in one request: the first is the candidate, a repeat with the same
  // content is a duplicate, with other content a conflict.
  const conflicts = new ProblemList(rows, options.rowOffset ?? 0);
  let duplicate = 0;
  const firstByExternalId = new Map<string, PricedAlert>();
  const candidates: PricedAlert[] = [];
  for (const alert of priced) {
    const first = firstByExternalId.get(alert.value.externalId);
    if (!first) {
      firstByExternalId.set(alert.value.externalId, alert);
      candidates.push(alert);
    } else if (first.contentHash === alert.contentHash) {
      duplicate += 1;
    } else {
      conflicts.add({ row: alert.row, path: "externalId", message: `conflict: row ${first.row + (options.rowOffset ?? 0)} of this request has the same externalId with different content` });
    }
  }
  return { rowCount: rows.length, errors, conflicts, candidates, duplicate };
}

export async function ingestAlerts(db: DbOrTx, options: IngestAlertsOptions): Promise<IngestAlertsAnswer> {
  const context = await loadAlertIngestContext(db);
  return storePreparedAlerts(db, prepareAlerts(context, options), options);
}

/**
 * Batches of one file being stored at the same time. PostgreSQL inserts one batch on one core (its
 * INSERT … SELECT is not parallel), so on a small server a second batch in flight keeps the other
 * core busy: 5,300–5,500 alerts/s with one, 7,000–8,200 with two (10,000-row batches into a
 * 100,000-alert table, 2 cores; npm run bench measures the whole path).
 */
export const BATCHES_STORED_AT_ONCE = 2;

/**
 * Many batches of one file, pipelined: batch n+1 is validated and priced while the database is
 * still storing batch n, and up to BATCHES_STORED_AT_ONCE batches are stored side by side, each
 * in its own transaction (only when given the client: on a caller's transaction they take turns).
 * Each batch commits on its own, as with ingestAlerts; settings and model versions are read once.
 * Answers and `onStored` come in file order whatever order the batches commit in.
 *
 * The file's earlier row wins, as if the batches were stored one after another: a batch that
 * shares an externalId with one still being stored waits for it, since of two inserts of one key
 * racing, the first to commit would keep its row. (Batches already committed need no care: the
 * INSERT's ON CONFLICT sees their rows.) If a batch fails, those still in flight are let finish —
 * each commits or rolls back on its own and shows in the ingest log — and the error is raised.
 */
export async function ingestAlertBatches(
  db: DbOrTx,
  batches: Iterable<{ rows: readonly unknown[]; rowOffset: number; now: Date }>,
  options: Omit<IngestAlertsOptions, "rows" | "rowOffset" | "now">,
  onStored?: (answer: IngestAlertsAnswer, rowOffset: number) => void,
): Promise<IngestAlertsAnswer[]> {
  const context = await loadAlertIngestContext(db);
  const atOnce = isRootClient(db) ? BATCHES_STORED_AT_ONCE : 1;
  const answers: IngestAlertsAnswer[] = [];
  // Oldest first.
  const inFlight: { rowOffset: number; externalIds: Set<string>; stored: Promise<IngestAlertsAnswer> }[] = [];
  const finishOldest = async () => {
    const oldest = inFlight[0];
    const answer = await oldest.stored;
    inFlight.shift();
    answers.push(answer);
    onStored?.(answer, oldest.rowOffset);
  };
  const sharesAnId = (externalIds: Set<string>) => inFlight.some((batch) => [...externalIds].some((id) => batch.externalIds.has(id)));
  try {
    for (const batch of batches) {
      const batchOptions = { ...options, rows: batch.rows, rowOffset: batch.rowOffset, now: batch.now };
      const prepared = prepareAlerts(context, batchOptions);
      const externalIds = new Set(prepared.candidates.map((alert) => alert.value.externalId));
      while (inFlight.length >= atOnce || (inFlight.length > 0 && sharesAnId(externalIds))) await finishOldest();
      const stored = storePreparedAlerts(db, prepared, batchOptions);
      // Handled here so that a later batch failing while an earlier one is awaited is not an
      // unhandled rejection; it is still raised when its turn comes (or below).
      stored.catch(() => undefined);
      inFlight.push({ rowOffset: batch.rowOffset, externalIds, stored });
    }
    while (inFlight.length > 0) await finishOldest();
  } catch (error) {
    await Promise.allSettled(inFlight.map((batch) => batch.stored));
    throw error;
  }
  return answers;
}

/** Writes a prepared batch: the alerts, the batch row, its audit event and label matching, in one transaction. */
export async function storePreparedAlerts(db: DbOrTx, prepared: PreparedAlerts, options: Omit<IngestAlertsOptions, "rows">): Promise<IngestAlertsAnswer> {
  const { errors, conflicts, candidates, rowCount } = prepared;
  let { duplicate } = prepared;
  const { now } = options;
  return inBatchTransaction(db, async (tx) => {
    const batchId = await openIngestBatch(tx, { kind: "alerts", channel: options.channel, actor: options.actor, fileName: options.fileName, now, rowCount });
    let accepted = 0;
    let rolledBack = false;

    if (options.atomic && (errors.rowCount > 0 || conflicts.rowCount > 0)) {
      rolledBack = true;
    } else if (candidates.length > 0) {
      if (options.atomic) await tx.$executeRawUnsafe("SAVEPOINT ingest_alerts_rows");
      const inserted = await insertAlerts(tx, batchId, candidates);
      accepted = inserted.size;
      const skipped = candidates.filter((alert) => !inserted.has(alert.value.externalId));
      if (skipped.length > 0) {
        const storedHashes = await contentHashesOf(tx, skipped.map((alert) => alert.value.externalId));
        for (const alert of skipped) {
          if (storedHashes.get(alert.value.externalId) === alert.contentHash) duplicate += 1;
          else conflicts.add({ row: alert.row, path: "externalId", message: "conflict: an alert with this externalId was received earlier with different content; it was kept unchanged" });
        }
      }
      if (options.atomic && conflicts.rowCount > 0) {
        await tx.$executeRawUnsafe("ROLLBACK TO SAVEPOINT ingest_alerts_rows");
        rolledBack = true;
        accepted = 0;
      }
    }

    const conflict = conflicts.rowCount;
    // All or nothing: every row of a rolled-back atomic request counts as rejected unless it conflicted.
    const counts = rolledBack
      ? { accepted: 0, duplicate: 0, conflict, rejected: rowCount - conflict }
      : { accepted, duplicate, conflict, rejected: errors.rowCount };
    const labelsMatched = accepted > 0 ? await matchWaitingLabels(tx, batchId) : 0;

    await closeIngestBatch(tx, {
      batchId,
      kind: "alerts",
      channel: options.channel,
      actor: options.actor,
      rowCount,
      counts,
      errors: errors.items,
      conflicts: conflicts.items,
      context: options.context,
    });
    return {
      batchId,
      ...counts,
      errors: errors.items,
      conflicts: conflicts.items,
      problemsTruncated: errors.truncated || conflicts.truncated,
      labelsMatched,
      rolledBack,
    };
  });
}

/** One INSERT for the whole batch; returns the external ids that were new. */
async function insertAlerts(tx: Prisma.TransactionClient, batchId: string, alerts: PricedAlert[]): Promise<Set<string>> {
  const records = alerts.map(({ value, contentHash, receivedAt, modelVersionId, risk }) => ({
    external_id: value.externalId,
    content_hash: contentHash,
    received_at: receivedAt.toISOString(),
    occurred_at: value.occurredAt.toISOString(),
    amount_minor: value.amountMinor,
    currency: value.currency,
    channel: value.channel,
    merchant_category_code: value.merchantCategoryCode,
    merchant_country: value.merchantCountry,
    entity_ref: value.entityRef,
    model_version_id: modelVersionId,
    score: value.score,
    reason_codes: value.reasonCodes,
    below_the_line: value.belowTheLine,
    inclusion_probability: value.inclusionProbability,
    probability: risk.probability,
    calibrated: risk.calibrated,
    probability_source: risk.probabilitySource,
    calibration_map_id: risk.calibrationMapId,
    exposure_minor: risk.exposureMinor,
    expected_loss_minor: risk.expectedLossMinor,
    due_at: risk.dueAt.toISOString(),
    priority: risk.priority,
  }));
  const inserted = await tx.$queryRaw<{ external_id: string }[]>`
    INSERT INTO alerts (portfolio_key, external_id, ingest_batch_id, content_hash, received_at, occurred_at, amount_minor,
                        currency, channel, merchant_category_code, merchant_country, entity_ref, model_version_id, score,
                        reason_codes, below_the_line, inclusion_probability, probability, calibrated, probability_source,
                        calibration_map_id, exposure_minor, expected_loss_minor, due_at, priority)
    SELECT ${DEFAULT_PORTFOLIO}, r.external_id, ${batchId}::uuid, r.content_hash, r.received_at, r.occurred_at, r.amount_minor,
           r.currency, r.channel, r.merchant_category_code, r.merchant_country, r.entity_ref, r.model_version_id, r.score,
           r.reason_codes, r.below_the_line, r.inclusion_probability, r.probability, r.calibrated, r.probability_source,
           r.calibration_map_id, r.exposure_minor, r.expected_loss_minor, r.due_at, r.priority
      FROM json_to_recordset(${JSON.stringify(records)}::json) AS r(
             external_id text, content_hash text, received_at timestamptz, occurred_at timestamptz, amount_minor bigint,
             currency text, channel text, merchant_category_code text, merchant_country text, entity_ref text,
             model_version_id uuid, score double precision, reason_codes jsonb, below_the_line boolean,
             inclusion_probability double precision, probability double precision, calibrated boolean,
             probability_source text, calibration_map_id uuid, exposure_minor bigint, expected_loss_minor bigint,
             due_at timestamptz, priority double precision)
    ON CONFLICT (portfolio_key, external_id) DO NOTHING
    RETURNING external_id`;
  return new Set(inserted.map((row) => row.external_id));
}

async function contentHashesOf(tx: Prisma.TransactionClient, externalIds: string[]): Promise<Map<string, string>> {
  const rows = await tx.$queryRaw<{ external_id: string; content_hash: string }[]>`
    SELECT a.external_id, a.content_hash
      FROM alerts a
      JOIN json_array_elements_text(${JSON.stringify(externalIds)}::json) AS e(external_id)
        ON a.portfolio_key = ${DEFAULT_PORTFOLIO} AND a.external_id = e.external_id`;
  return new Map(rows.map((row) => [row.external_id, row.content_hash]));
}

/** Labels kept with alert_id NULL because they arrived first now point at their alert. */
async function matchWaitingLabels(tx: Prisma.TransactionClient, batchId: string): Promise<number> {
  return tx.$executeRaw`
    UPDATE labels l SET alert_id = a.id
      FROM alerts a
     WHERE a.ingest_batch_id = ${batchId}::uuid
       AND l.alert_id IS NULL AND l.portfolio_key = a.portfolio_key AND l.alert_external_id = a.external_id`;
}
