// How each model version really performs over a window (DESIGN.md §4 Feedback-loop metrics): the
// numbers of the Model health screen and of GET /api/v1/metrics/model-versions.
//
// Counting happens in PostgreSQL, over daily summaries (one row per model version and UTC day, kept
// fresh by lib/feedback/refresh-daily-summaries.ts): a handful of GROUP BY queries over the window's
// days return a few rows per model version (per bucket, per calibration bin, per day). At 1,000,000
// alerts this replaced reading the window's ~90,000 alerts on every view. lib/metrics then turns counts
// into rates with Wilson intervals. Two measures need the scores themselves — ROC AUC / average
// precision (ranks) and PSI (reference quantiles) — and for those each model version sends back
// about SCORE_SAMPLE_CAP scores per list at most: all of them when there are fewer, otherwise a
// Bernoulli sample drawn by a hash of the alert id (so the same data always gives the same sample).
// The answer says when a list was sampled and how long the whole list was.
//
// Scope of the alerted-range numbers: alerts received in the window, below-the-line samples left out
// (they are drawn on purpose from below the alert threshold at a known rate π and would distort
// precision, calibration, ranking and drift of the alerted population). The samples are reported
// apart, where every estimate over them weights each by 1/π (Horvitz–Thompson, in Hájek's ratio form).
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { Prisma } from "@/lib/generated/prisma/client";
import { AppError } from "@/lib/errors";
import { getSettings } from "@/lib/settings/get-settings";
import {
  averagePrecision,
  populationStabilityIndex,
  PSI_ACT,
  PSI_WATCH,
  rate,
  realizedPrecision,
  rocAuc,
} from "@/lib/metrics";
import { expectedCalibrationErrorOfBins, reliabilityBinsFromSums, type BinSums } from "@/lib/feedback/calibration-bins";
import { refreshModelVersionDays } from "@/lib/feedback/refresh-daily-summaries";
import { bucketsOf, DAY_MS, resolveMetricsWindow, windowJson, type Bucket, type MetricsWindow } from "@/lib/feedback/metrics-window";
import type { ModelVersionMetrics, ModelVersionMetricsAnswer, ModelVersionMetricsQuery, WindowQuery } from "@/lib/feedback/schemas";

/**
 * A bucket of the drift series gets its own PSI only with at least this many scores. Two samples of
 * the same distribution still give PSI ≈ (bins − 1)·(1/n + 1/m) on average (PSI is the symmetric
 * Kullback–Leibler divergence, whose sampling distribution is close to a scaled χ² with bins − 1
 * degrees of freedom; from memory): 9/85 ≈ 0.11 for a day of 85 alerts, past the watch line with no
 * drift at all. From 500 scores the noise stays under about 0.02. Our rule, not a published one.
 */
export const MIN_SCORES_FOR_PSI_BUCKET = 500;

/** Score list length one model version sends back for AUC/AP, and per drift window for PSI, before sampling. */
export const SCORE_SAMPLE_CAP = 20_000;

export interface GetModelVersionMetricsOptions {
  query: WindowQuery & ModelVersionMetricsQuery;
  now: Date;
  /** For tests and benchmarks; defaults to SCORE_SAMPLE_CAP. */
  scoreSampleCap?: number;
}

interface VersionRow {
  id: string;
  modelName: string;
  version: string;
  scoreKind: "probability" | "anomaly";
  alertThreshold: number;
  active: boolean;
}

interface SummaryRow {
  modelVersionId: string;
  belowTheLine: boolean;
  received: number;
  closed: number;
  mixFraud: number;
  mixLegitimate: number;
  mixInconclusive: number;
  truthFraud: number;
  truthLegitimate: number;
  truthUnknown: number;
  overturned: number;
  calibrationAlerts: number;
  calibratedAlerts: number;
  brierSum: number | null;
  weightAll: number | null;
  weightResolved: number | null;
  weightFraud: number | null;
}

interface SeriesRow {
  modelVersionId: string;
  /** Start of the bucket, as PostgreSQL writes a timestamptz in JSON. */
  bucketFrom: string;
  received: number;
  closed: number;
  truthFraud: number;
  truthLegitimate: number;
  truthUnknown: number;
}

interface BinRow extends BinSums {
  modelVersionId: string;
}

interface ScoreListRow {
  modelVersionId: string;
  total: number;
  /** One slice per day. */
  scores: number[][];
  labels: number[][];
}

interface PrecisionAtKRow {
  modelVersionId: string;
  dayFrom: string;
  considered: number;
  fraud: number;
  resolved: number;
}

/** What the main statement returns: one row of JSON arrays, one per aggregation. */
interface WindowAggregates {
  summaries: SummaryRow[];
  series: SeriesRow[];
  bins: BinRow[];
  scoreLists: ScoreListRow[];
  topK: PrecisionAtKRow[];
  drift: DriftRow[];
}

interface DriftRow {
  modelVersionId: string;
  current: boolean;
  total: number;
  /** [day index from the start of the current window, that day's sampled scores]. */
  days: [number, number[]][];
}

/** A drift list flattened: its scores, and for each the day index it came from. */
interface DriftList {
  total: number;
  scores: number[];
  days: number[];
}

function flattenDrift(row: DriftRow | undefined): DriftList | undefined {
  if (!row) return undefined;
  const scores: number[] = [];
  const days: number[] = [];
  for (const [day, slice] of row.days) {
    for (const score of slice) {
      scores.push(score);
      days.push(day);
    }
  }
  return { total: row.total, scores, days };
}

/**
 * How many entries of a day's key-ordered array are in the sample: all of them when the whole list
 * has at most `cap`, otherwise those whose key is below 2^20 · cap / total — a Bernoulli sample of
 * rate cap / total decided by a hash of the alert id (SAMPLE_KEY_SQL): the same alerts on every
 * call, and a size that varies around `cap` by about √cap (±1% at 20,000). Keys are whole numbers,
 * so key < θ is key ≤ ⌈θ⌉ − 1, and width_bucket counts the keys ≤ that by binary search.
 */
function sampledPrefix(keys: Prisma.Sql, total: Prisma.Sql, cap: number): Prisma.Sql {
  return Prisma.sql`(CASE WHEN cardinality(${keys}) = 0 THEN 0
                         WHEN ${total} <= ${cap} THEN cardinality(${keys})
                         ELSE width_bucket((ceil(1048576::float8 * ${cap} / ${total}) - 1)::int, ${keys}) END)`;
}

function weighted(successes: number, trials: number, alerts: number) {
  return { value: trials > 0 ? successes / trials : null, weightedSuccesses: successes, weightedTrials: trials, alerts };
}

function finiteOrNull(value: number): number | null {
  return Number.isFinite(value) ? value : null;
}

async function findModelVersions(db: DbOrTx, window: MetricsWindow, ids: string[]): Promise<VersionRow[]> {
  const condition =
    ids.length > 0
      ? Prisma.sql`m.id = ANY(${ids}::uuid[])`
      : Prisma.sql`(m.active OR EXISTS (SELECT 1 FROM alerts a WHERE a.model_version_id = m.id
                                          AND a.received_at >= ${window.from} AND a.received_at < ${window.to}))`;
  const rows = await db.$queryRaw<VersionRow[]>(Prisma.sql`
    SELECT m.id, m.model_name AS "modelName", m.version, m.score_kind AS "scoreKind",
           m.alert_threshold AS "alertThreshold", m.active
      FROM model_versions m
     WHERE ${condition}
     ORDER BY m.model_name, m.created_at, m.version`);
  const missing = ids.filter((id) => !rows.some((row) => row.id === id));
  if (missing.length > 0) {
    throw new AppError("not_found", `No model version with id ${missing.join(", ")}.`, [
      { path: "modelVersionId", message: `unknown model version id ${missing.join(", ")}` },
    ]);
  }
  // Keep the caller's order when ids were given: champion first, then challenger.
  return ids.length > 0 ? ids.map((id) => rows.find((row) => row.id === id)!) : rows;
}

export async function getModelVersionMetrics(db: DbOrTx, options: GetModelVersionMetricsOptions): Promise<ModelVersionMetricsAnswer> {
  const { query, now } = options;
  const cap = options.scoreSampleCap ?? SCORE_SAMPLE_CAP;
  const settings = await getSettings(db);
  const window = resolveMetricsWindow(query, { now, labelMaturityDays: settings.metrics.labelMaturityDays });
  const versions = await findModelVersions(db, window, [...new Set(query.modelVersionId)]);
  const ids = versions.map((version) => version.id);
  const k = settings.metrics.dailyCapacity;

  const driftCurrentFrom = new Date(window.to.getTime() - query.driftCurrentDays * DAY_MS);
  const driftReferenceFrom = new Date(driftCurrentFrom.getTime() - query.driftReferenceDays * DAY_MS);
  const seriesBuckets = bucketsOf(window, window.bucket);
  const days = bucketsOf(window, "day");
  const driftSpan = { from: driftCurrentFrom, to: window.to, matureBefore: window.matureBefore };

  const step = window.bucket === "day" ? "1 day" : "7 days";
  const spanFrom = new Date(Math.min(window.from.getTime(), driftReferenceFrom.getTime()));
  const dayOf = (date: Date) => date.toISOString().slice(0, 10);

  // Bring the daily summaries of the span up to date (lib/feedback/refresh-daily-summaries.ts), then
  // add them up: one statement over a few dozen rows per model version, each aggregation returned as
  // a JSON array of a few rows per model version. The score lists and drift unnest the days' stored
  // scores and draw the sample by the stored keys.
  await refreshModelVersionDays(db, { modelVersionIds: ids, span: { from: spanFrom, to: window.to }, k });
  const [aggregates] = await db.$queryRaw<[WindowAggregates]>(Prisma.sql`
    WITH d AS MATERIALIZED (
      SELECT * FROM model_version_daily_summaries
       WHERE model_version_id = ANY(${ids}::uuid[]) AND day >= ${dayOf(spanFrom)}::date AND day < ${dayOf(window.to)}::date
    ),
    w AS (SELECT * FROM d WHERE day >= ${dayOf(window.from)}::date),
    summaries AS (
      SELECT model_version_id AS "modelVersionId", below_the_line AS "belowTheLine",
             sum(received) AS received, sum(closed) AS closed,
             sum(mix_fraud) AS "mixFraud", sum(mix_legitimate) AS "mixLegitimate", sum(mix_inconclusive) AS "mixInconclusive",
             sum(truth_fraud) AS "truthFraud", sum(truth_legitimate) AS "truthLegitimate", sum(truth_unknown) AS "truthUnknown",
             sum(overturned) AS overturned, sum(calibration_alerts) AS "calibrationAlerts", sum(calibrated_alerts) AS "calibratedAlerts",
             sum(brier_sum) AS "brierSum", sum(weight_all) AS "weightAll", sum(weight_resolved) AS "weightResolved",
             sum(weight_fraud) AS "weightFraud"
        FROM w GROUP BY 1, 2
    ),
    series AS (
      SELECT model_version_id AS "modelVersionId",
             date_bin(${step}::interval, day::timestamp AT TIME ZONE 'UTC', ${window.from}::timestamptz) AS "bucketFrom",
             sum(received) AS received, sum(closed) AS closed, sum(truth_fraud) AS "truthFraud",
             sum(truth_legitimate) AS "truthLegitimate", sum(truth_unknown) AS "truthUnknown"
        FROM w WHERE NOT below_the_line GROUP BY 1, 2
    ),
    bins AS (
      SELECT w.model_version_id AS "modelVersionId", (b.ord - 1)::int AS bin, sum(b.n) AS n, sum(b.sum_p) AS "sumP", sum(b.sum_y) AS "sumY"
        FROM w CROSS JOIN LATERAL unnest(w.bin_counts, w.bin_sum_p, w.bin_sum_y) WITH ORDINALITY AS b(n, sum_p, sum_y, ord)
       WHERE NOT w.below_the_line GROUP BY 1, 2 HAVING sum(b.n) > 0
    ),
    -- The lists' lengths come from the day rows (labelled = closed with a known truth). Each day's
    -- arrays are in sample-key order, so its sample is the prefix of keys below the cut: found by
    -- binary search (width_bucket) and sliced, never unnested. Sent back as one slice per day.
    labelled_totals AS (
      SELECT model_version_id AS mv, sum(truth_fraud + truth_legitimate) AS total FROM w WHERE NOT below_the_line GROUP BY 1
    ),
    score_lists AS (
      SELECT t.mv AS "modelVersionId", t.total, json_agg(w.labelled_scores[1:cut.n]) AS scores, json_agg(w.labelled_truths[1:cut.n]) AS labels
        FROM labelled_totals t
        JOIN w ON w.model_version_id = t.mv AND NOT w.below_the_line
       CROSS JOIN LATERAL (SELECT ${sampledPrefix(Prisma.sql`w.labelled_keys`, Prisma.sql`t.total`, cap)} AS n) cut
       WHERE cut.n > 0
       GROUP BY t.mv, t.total
    ),
    top_k AS (
      SELECT model_version_id AS "modelVersionId", (day::timestamp AT TIME ZONE 'UTC') AS "dayFrom",
             top_considered AS considered, top_fraud AS fraud, top_resolved AS resolved
        FROM w WHERE NOT below_the_line AND top_considered > 0
    ),
    -- Drift reads its own span (reference and current windows) and needs no labels.
    drift_days AS (
      SELECT model_version_id AS mv, day >= ${dayOf(driftCurrentFrom)}::date AS current, day - ${dayOf(driftCurrentFrom)}::date AS day_index,
             scores, sample_keys, received
        FROM d WHERE NOT below_the_line AND day >= ${dayOf(driftReferenceFrom)}::date
    ),
    drift_totals AS (SELECT mv, current, sum(received) AS total FROM drift_days GROUP BY 1, 2),
    drift AS (
      SELECT t.mv AS "modelVersionId", t.current, t.total, json_agg(json_build_array(r.day_index, r.scores[1:cut.n])) AS days
        FROM drift_totals t
        JOIN drift_days r ON r.mv = t.mv AND r.current = t.current
       CROSS JOIN LATERAL (SELECT ${sampledPrefix(Prisma.sql`r.sample_keys`, Prisma.sql`t.total`, cap)} AS n) cut
       WHERE cut.n > 0
       GROUP BY t.mv, t.current, t.total
    )
    SELECT (SELECT coalesce(json_agg(summaries), '[]') FROM summaries) AS summaries,
           (SELECT coalesce(json_agg(series), '[]') FROM series) AS series,
           (SELECT coalesce(json_agg(bins), '[]') FROM bins) AS bins,
           (SELECT coalesce(json_agg(score_lists), '[]') FROM score_lists) AS "scoreLists",
           (SELECT coalesce(json_agg(top_k), '[]') FROM top_k) AS "topK",
           (SELECT coalesce(json_agg(drift), '[]') FROM drift) AS drift`);
  const { summaries, series, bins, scoreLists, topK, drift } = aggregates;
  // Lists arrive as unsorted slices. lib/metrics sorts its own copy; the drift reference is sorted
  // once here, since every PSI of a day sorts it again and a sorted input makes that sort linear.
  const startOf = (text: string) => new Date(text).getTime();

  const modelVersions: ModelVersionMetrics[] = versions.map((version) => {
    const mine = <T extends { modelVersionId: string }>(rows: T[]) => rows.filter((row) => row.modelVersionId === version.id);
    const alerted = summaries.find((row) => row.modelVersionId === version.id && !row.belowTheLine);
    const below = summaries.find((row) => row.modelVersionId === version.id && row.belowTheLine);

    const precision = realizedPrecision({
      confirmedFraud: alerted?.truthFraud ?? 0,
      legitimate: alerted?.truthLegitimate ?? 0,
      inconclusive: alerted?.truthUnknown ?? 0,
    });

    const seriesRows = mine(series);
    const seriesPoints = seriesBuckets.map((bucket) => {
      const row = seriesRows.find((candidate) => startOf(candidate.bucketFrom) === bucket.from.getTime());
      return {
        ...bucketJson(bucket),
        received: row?.received ?? 0,
        closed: row?.closed ?? 0,
        realizedPrecision: realizedPrecision({
          confirmedFraud: row?.truthFraud ?? 0,
          legitimate: row?.truthLegitimate ?? 0,
          inconclusive: row?.truthUnknown ?? 0,
        }),
      };
    });

    const reliability = reliabilityBinsFromSums(mine(bins));
    const calibrationAlerts = alerted?.calibrationAlerts ?? 0;

    const list = mine(scoreLists)[0];
    const scores = list?.scores.flat() ?? [];
    const labels = list?.labels.flat() ?? [];
    const positives = labels.filter((y) => y === 1).length;

    const driftRows = mine(drift);
    const reference = flattenDrift(driftRows.find((row) => !row.current));
    const current = flattenDrift(driftRows.find((row) => row.current));
    reference?.scores.sort((a, b) => a - b);
    const stability = reference && current ? populationStabilityIndex(reference.scores, current.scores) : null;
    // Days when a typical day has enough scores for its own PSI, otherwise weeks.
    const driftStep = (current?.scores.length ?? 0) >= MIN_SCORES_FOR_PSI_BUCKET * query.driftCurrentDays ? "day" : "week";
    const driftBuckets = bucketsOf(driftSpan, driftStep);
    const scoresByBucket = driftBuckets.map(() => [] as number[]);
    current?.scores.forEach((score, i) => scoresByBucket[Math.floor(current.days[i] / (driftStep === "day" ? 1 : 7))]?.push(score));
    const driftSeries = driftBuckets.map((bucket, index) => {
      const bucketScores = scoresByBucket[index];
      return {
        ...bucketJson(bucket),
        scores: bucketScores.length,
        psi: reference && bucketScores.length >= MIN_SCORES_FOR_PSI_BUCKET ? populationStabilityIndex(reference.scores, bucketScores).psi : null,
      };
    });

    const topKRows = mine(topK);
    const topKDays = days.map((day) => {
      const row = topKRows.find((candidate) => startOf(candidate.dayFrom) === day.from.getTime());
      return { ...bucketJson(day), considered: row?.considered ?? 0, resolved: row?.resolved ?? 0, precision: rate(row?.fraud ?? 0, row?.considered ?? 0) };
    });
    const pooledFraud = topKRows.reduce((sum, row) => sum + row.fraud, 0);
    const pooledConsidered = topKRows.reduce((sum, row) => sum + row.considered, 0);

    const alertedResolved = (alerted?.truthFraud ?? 0) + (alerted?.truthLegitimate ?? 0);
    const belowResolved = (below?.truthFraud ?? 0) + (below?.truthLegitimate ?? 0);
    const weightResolved = below?.weightResolved ?? 0;
    const weightFraud = below?.weightFraud ?? 0;

    return {
      modelVersion: version,
      received: alerted?.received ?? 0,
      closed: alerted?.closed ?? 0,
      outcomeMix: {
        confirmedFraud: alerted?.mixFraud ?? 0,
        legitimate: alerted?.mixLegitimate ?? 0,
        inconclusive: alerted?.mixInconclusive ?? 0,
      },
      overturnedByLabel: alerted?.overturned ?? 0,
      realizedPrecision: precision,
      series: seriesPoints,
      calibration: {
        alerts: calibrationAlerts,
        calibratedAlerts: alerted?.calibratedAlerts ?? 0,
        bins: reliability,
        brierScore: calibrationAlerts > 0 && alerted?.brierSum != null ? alerted.brierSum / calibrationAlerts : null,
        expectedCalibrationError: expectedCalibrationErrorOfBins(reliability),
      },
      discrimination: {
        measuredOnReviewedAlertsOnly: true as const,
        rocAuc: rocAuc(scores, labels),
        averagePrecision: averagePrecision(scores, labels),
        positives,
        negatives: labels.length - positives,
        sample: { used: scores.length, total: list?.total ?? 0, sampled: (list?.total ?? 0) > scores.length },
      },
      drift: {
        reference: {
          from: driftReferenceFrom.toISOString(),
          to: driftCurrentFrom.toISOString(),
          sample: { used: reference?.scores.length ?? 0, total: reference?.total ?? 0, sampled: (reference?.total ?? 0) > (reference?.scores.length ?? 0) },
        },
        current: {
          from: driftCurrentFrom.toISOString(),
          to: window.to.toISOString(),
          sample: { used: current?.scores.length ?? 0, total: current?.total ?? 0, sampled: (current?.total ?? 0) > (current?.scores.length ?? 0) },
        },
        psi: stability?.psi ?? null,
        level: stability?.level ?? null,
        watchLine: PSI_WATCH,
        actLine: PSI_ACT,
        bins: (stability?.bins ?? []).map((bin) => ({ ...bin, lower: finiteOrNull(bin.lower), upper: finiteOrNull(bin.upper) })),
        step: driftStep,
        series: driftSeries,
      },
      precisionAtK: { k, overall: rate(pooledFraud, pooledConsidered), days: topKDays },
      belowTheLine: {
        sampled: below?.received ?? 0,
        resolved: belowResolved,
        sampleFraudRate: rate(below?.truthFraud ?? 0, belowResolved),
        represents: below?.weightAll ?? 0,
        weightedFraudRate: weighted(weightFraud, weightResolved, belowResolved),
        weightedPopulationFraudRate: weighted(
          (alerted?.truthFraud ?? 0) + weightFraud,
          alertedResolved + weightResolved,
          alertedResolved + belowResolved,
        ),
      },
    };
  });

  return { window: windowJson(window), generatedAt: now.toISOString(), modelVersions };
}

function bucketJson(bucket: Bucket): { from: string; to: string; mature: boolean } {
  return { from: bucket.from.toISOString(), to: bucket.to.toISOString(), mature: bucket.mature };
}
