// The capacity planner's numbers for every model version with recent traffic (the Capacity planner
// screen and GET /api/v1/capacity). PostgreSQL bins the last `days` of each version's alerts; the
// pure planner (lib/metrics/capacity-planner.ts) does the rest.
//
// Binning: per model version and side of the line (alerts vs below-the-line samples), scores are cut
// into SCORE_BINS bins of equal count (ntile), and within each bin exposures into bins one
// EXPOSURE_LOG_STEP wide on a log scale (a factor of about 1.22); currencies stay in separate cells.
// A cell carries its weighted mean score, its weighted mean exposure and its weight per day; alerts
// weigh 1, below-the-line samples 1/π (Horvitz–Thompson). A few thousand cells per version come back,
// however many alerts the window holds. Each cell's probability is the version's current calibration
// at the cell's score (lib/risk fraudProbability: the latest map, or the undersampling-corrected
// score, or the prior hit rate), not the probability stored on the alerts, which may come from an
// older map.
//
// Cost: one index-only range scan of each version's window and one sort of it. Measured in
// tests/workload/workload-volume.integration.test.ts.
//
// Days: a version whose first alert in the window came more than a day after the window opened is
// counted from that first alert, so a version deployed last week is not read at half its volume.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { isRootClient } from "@/lib/db/in-transaction";
import { assertIsotonicCalibrationMap, fraudProbability, type IsotonicCalibrationMap, type ScoreKind } from "@/lib/risk";
import { planCapacity as planCapacityCore, type ScoreCell } from "@/lib/metrics/capacity-planner";
import { getSettings } from "@/lib/settings/get-settings";
import type { CapacityPlanAnswer, CapacityQuery, ModelVersionCapacity } from "@/lib/workload/schemas";

export const SCORE_BINS = 400;
export const EXPOSURE_LOG_STEP = 0.2;

const DAY_MS = 86_400_000;

export const CAPACITY_ASSUMPTIONS = [
  "Recent traffic is like the future: the last days' alerts and below-the-line samples, per day, stand for tomorrow's.",
  "Probabilities come from each model version's current calibration, which is valid in the alerted score range where outcomes exist; below it only the below-the-line samples carry labels, and the map is held flat (clipped) outside its fitted range.",
  "Below the current threshold the traffic is known only through below-the-line samples, each standing for 1/π transactions; a threshold set there is as uncertain as those few samples.",
  "Reviewing an alert catches its expected loss (probability × exposure): the money at stake that review reaches, not a promise of recovery.",
  "Each model version is planned as if the whole capacity went to it; the queue mixes versions, so split K between them when several feed it.",
  "Money is summed as if every alert were in the home currency (exposure is stored in each alert's own currency).",
];

export interface PlanCapacityOptions {
  query: CapacityQuery;
  now: Date;
}

interface VersionRow {
  id: string;
  modelName: string;
  version: string;
  scoreKind: ScoreKind;
  negativeSamplingRate: number;
  priorHitRate: number | null;
  alertThreshold: number;
  active: boolean;
  mapId: string | null;
  fittedAt: Date | null;
  labelCount: number | null;
  scorePoints: number[] | null;
  probabilityPoints: number[] | null;
}

interface CellRow {
  modelVersionId: string;
  belowTheLine: boolean;
  currency: string;
  withoutExposure: boolean;
  alerts: number;
  firstReceivedAt: Date;
  score: number;
  weight: number;
  exposure: number;
}

export async function planCapacity(db: DbOrTx, { query, now }: PlanCapacityOptions): Promise<CapacityPlanAnswer> {
  const settings = await getSettings(db);
  const handlingMinutes = query.handlingMinutes ?? settings.queue.expectedHandlingMinutes;
  const capacity =
    query.capacity !== undefined
      ? { perDay: query.capacity, source: "given" as const, staffing: null }
      : query.analysts !== undefined && query.hours !== undefined
        ? {
            perDay: Math.floor((query.analysts * query.hours * 60) / handlingMinutes),
            source: "staffing" as const,
            staffing: { analysts: query.analysts, hoursPerAnalyst: query.hours, handlingMinutes },
          }
        : { perDay: settings.metrics.dailyCapacity, source: "setting" as const, staffing: null };

  const from = new Date(now.getTime() - query.days * DAY_MS);
  const only = query.modelVersionId;

  // One pass over the window, per model version through alerts_model_version_received_idx, which
  // INCLUDEs every column read here (migration 20261202081000), so it is an index-only range scan.
  // ntile() sorts each version's window once; bins of equal count put the resolution where the alerts
  // are, and one extreme anomaly score cannot squeeze all the others into one bin (as bins of equal
  // width between min and max would; tried, and no faster: the GROUP BY then sorted the same rows).
  // Alerts without an exposure form cells of their own, counted and left out of the plan.
  const readCells = (tx: DbOrTx) => tx.$queryRaw<CellRow[]>`
    WITH w AS (
      SELECT m.id AS model_version_id, a.received_at, a.below_the_line, a.currency, a.score,
             a.exposure_minor::float8 AS exposure, 1.0::float8 / coalesce(a.inclusion_probability, 1) AS weight
        FROM model_versions m
        CROSS JOIN LATERAL (
          SELECT received_at, below_the_line, currency, score, exposure_minor, inclusion_probability FROM alerts
           WHERE model_version_id = m.id AND received_at >= ${from} AND received_at < ${now}) a
       WHERE cardinality(${only}::uuid[]) = 0 OR m.id = ANY(${only}::uuid[])),
    b AS (
      SELECT *, ntile(${SCORE_BINS}::int) OVER (PARTITION BY model_version_id, below_the_line, exposure IS NULL ORDER BY score) AS score_bin,
             floor(ln(1 + exposure) / ${EXPOSURE_LOG_STEP}::float8)::int AS exposure_bin
        FROM w)
    SELECT model_version_id AS "modelVersionId", below_the_line AS "belowTheLine", currency, exposure IS NULL AS "withoutExposure",
           count(*)::int AS alerts, min(received_at) AS "firstReceivedAt",
           sum(weight * score) / sum(weight) AS score, sum(weight) AS weight, sum(weight * exposure) / sum(weight) AS exposure
      FROM b
     GROUP BY model_version_id, below_the_line, currency, exposure IS NULL, score_bin, exposure_bin`;

  // The sort of a 14-day window at a million alerts (about 230,000 rows) needs ~20 MB; PostgreSQL's
  // default work_mem (4 MB) would spill it to disk. Raised for this statement's own transaction only;
  // inside a caller's transaction the caller's setting stands.
  const cells = isRootClient(db)
    ? await db.$transaction(async (tx) => {
        await tx.$executeRaw`SET LOCAL work_mem = '32MB'`;
        return readCells(tx);
      })
    : await readCells(db);

  const cellsByVersion = new Map<string, CellRow[]>();
  for (const cell of cells) {
    const list = cellsByVersion.get(cell.modelVersionId);
    if (list) list.push(cell);
    else cellsByVersion.set(cell.modelVersionId, [cell]);
  }

  // The versions seen in the window, with their current calibration map (the latest fit at `now`).
  const versions = await db.$queryRaw<VersionRow[]>`
    SELECT m.id, m.model_name AS "modelName", m.version, m.score_kind AS "scoreKind",
           m.negative_sampling_rate AS "negativeSamplingRate", m.prior_hit_rate AS "priorHitRate",
           m.alert_threshold AS "alertThreshold", m.active,
           c.id AS "mapId", c.fitted_at AS "fittedAt", c.label_count AS "labelCount",
           c.score_points AS "scorePoints", c.probability_points AS "probabilityPoints"
      FROM model_versions m
      LEFT JOIN LATERAL (
        SELECT id, fitted_at, label_count, score_points, probability_points FROM calibration_maps
         WHERE model_version_id = m.id AND fitted_at <= ${now} ORDER BY fitted_at DESC, id LIMIT 1
      ) c ON true
     WHERE m.id = ANY(${[...cellsByVersion.keys()]}::uuid[])
     ORDER BY m.active DESC, m.model_name, m.version`;

  const modelVersions: ModelVersionCapacity[] = versions.map((version) => {
    const map: IsotonicCalibrationMap | null =
      version.mapId === null ? null : assertIsotonicCalibrationMap({ scores: version.scorePoints ?? [], probabilities: version.probabilityPoints ?? [] });
    const rows = cellsByVersion.get(version.id) ?? [];
    const count = (keep: (cell: CellRow) => boolean) => rows.reduce((sum, cell) => sum + (keep(cell) ? cell.alerts : 0), 0);
    const firstReceivedAt = rows.reduce((first, cell) => Math.min(first, cell.firstReceivedAt.getTime()), Infinity);
    const alerts = count((cell) => !cell.belowTheLine);
    const startedInside = firstReceivedAt - from.getTime() > DAY_MS;
    const days = (now.getTime() - (startedInside ? firstReceivedAt : from.getTime())) / DAY_MS;
    const source: ModelVersionCapacity["calibration"]["source"] = map !== null ? "calibration_map" : version.scoreKind === "probability" ? "corrected_score" : "prior_hit_rate";
    const scoreCells: ScoreCell[] = rows
      .filter((cell) => !cell.withoutExposure)
      .map((cell) => {
        const probability = fraudProbability({
          scoreKind: version.scoreKind,
          score: cell.score,
          negativeSamplingRate: version.negativeSamplingRate,
          priorHitRate: version.priorHitRate,
          calibrationMap: map,
        });
        return { score: cell.score, perDay: cell.weight / days, probability: probability.probability, exposureMinor: cell.exposure, alerted: !cell.belowTheLine };
      });
    const plan = planCapacityCore({ cells: scoreCells, capacityPerDay: capacity.perDay });
    const scoreRange: [number, number] | null = map ? [map.scores[0], map.scores[map.scores.length - 1]] : null;
    return {
      modelVersionId: version.id,
      modelName: version.modelName,
      version: version.version,
      scoreKind: version.scoreKind,
      active: version.active,
      currentThreshold: version.alertThreshold,
      calibration: { source, calibrationMapId: version.mapId, fittedAt: version.fittedAt, labelCount: version.labelCount, scoreRange },
      observed: {
        days,
        alerts,
        belowTheLineSamples: count((cell) => cell.belowTheLine),
        alertsPerDay: alerts / days,
        trafficPerDay: plan.trafficPerDay,
        currencies: [...new Set(rows.map((cell) => cell.currency))].sort(),
        withoutExposure: count((cell) => cell.withoutExposure),
      },
      threshold: {
        ...plan.threshold,
        inCalibratedRange: scoreRange === null || plan.threshold.threshold === null || plan.threshold.threshold >= scoreRange[0],
      },
      queuePerDay: plan.queuePerDay,
      queueExpectedLossPerDayMinor: plan.queueExpectedLossPerDayMinor,
      queueByScore: plan.queueByScore,
      queueByExpectedLoss: plan.queueByExpectedLoss,
      orderingGainPerDayMinor: plan.orderingGainPerDayMinor,
      curve: plan.curve,
    };
  });

  return {
    now,
    capacity,
    window: { from, to: now, days: query.days },
    homeCurrency: settings.costs.homeCurrency,
    assumptions: CAPACITY_ASSUMPTIONS,
    modelVersions,
  };
}
