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
// Cost: both passes read the whole window (no index covers it); pass 2 also sorts it once. Measured
// in tests/workload/workload-volume.integration.test.ts.
//
// Days: a version whose first alert in the window came more than a day after the window opened is
// counted from that first alert, so a version deployed last week is not read at half its volume.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
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
  firstReceivedAt: Date;
  alerts: number;
  samples: number;
  withoutExposure: number;
}

interface CellRow {
  modelVersionId: string;
  belowTheLine: boolean;
  currency: string;
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

  // Pass 1: per model version, what the window holds (one aggregation over the window), joined with
  // the version and its current calibration map (the latest fit at `now`).
  const versions = await db.$queryRaw<VersionRow[]>`
    WITH s AS (
      SELECT model_version_id, min(received_at) AS first_received_at,
             count(*) FILTER (WHERE NOT below_the_line)::int AS alerts,
             count(*) FILTER (WHERE below_the_line)::int AS samples,
             count(*) FILTER (WHERE exposure_minor IS NULL)::int AS without_exposure
        FROM alerts
       WHERE received_at >= ${from} AND received_at < ${now}
         AND (cardinality(${only}::uuid[]) = 0 OR model_version_id = ANY(${only}::uuid[]))
       GROUP BY model_version_id)
    SELECT m.id, m.model_name AS "modelName", m.version, m.score_kind AS "scoreKind",
           m.negative_sampling_rate AS "negativeSamplingRate", m.prior_hit_rate AS "priorHitRate",
           m.alert_threshold AS "alertThreshold", m.active,
           c.id AS "mapId", c.fitted_at AS "fittedAt", c.label_count AS "labelCount",
           c.score_points AS "scorePoints", c.probability_points AS "probabilityPoints",
           s.first_received_at AS "firstReceivedAt", s.alerts, s.samples, s.without_exposure AS "withoutExposure"
      FROM s
      JOIN model_versions m ON m.id = s.model_version_id
      LEFT JOIN LATERAL (
        SELECT id, fitted_at, label_count, score_points, probability_points FROM calibration_maps
         WHERE model_version_id = m.id AND fitted_at <= ${now} ORDER BY fitted_at DESC, id LIMIT 1
      ) c ON true
     ORDER BY m.active DESC, m.model_name, m.version`;

  // Pass 2: the cells. ntile() sorts the window once per version and side of the line; bins of equal
  // count put the resolution where the alerts are, and one extreme anomaly score cannot squeeze all
  // the others into a single bin (as bins of equal width between min and max would; tried, and no
  // faster either: the GROUP BY then sorted the same rows).
  const cells =
    versions.length === 0
      ? []
      : await db.$queryRaw<CellRow[]>`
    WITH w AS (
      SELECT a.model_version_id, a.below_the_line, a.currency, a.score, a.exposure_minor::float8 AS exposure,
             1.0::float8 / coalesce(a.inclusion_probability, 1) AS weight
        FROM alerts a
       WHERE a.model_version_id = ANY(${versions.map((v) => v.id)}::uuid[])
         AND a.received_at >= ${from} AND a.received_at < ${now} AND a.exposure_minor IS NOT NULL),
    b AS (
      SELECT *, ntile(${SCORE_BINS}::int) OVER (PARTITION BY model_version_id, below_the_line ORDER BY score) AS score_bin,
             floor(ln(1 + exposure) / ${EXPOSURE_LOG_STEP}::float8)::int AS exposure_bin
        FROM w)
    SELECT model_version_id AS "modelVersionId", below_the_line AS "belowTheLine", currency,
           sum(weight * score) / sum(weight) AS score, sum(weight) AS weight, sum(weight * exposure) / sum(weight) AS exposure
      FROM b
     GROUP BY model_version_id, below_the_line, currency, score_bin, exposure_bin`;

  const cellsByVersion = new Map<string, CellRow[]>();
  for (const cell of cells) {
    const list = cellsByVersion.get(cell.modelVersionId);
    if (list) list.push(cell);
    else cellsByVersion.set(cell.modelVersionId, [cell]);
  }

  const modelVersions: ModelVersionCapacity[] = versions.map((version) => {
    const map: IsotonicCalibrationMap | null =
      version.mapId === null ? null : assertIsotonicCalibrationMap({ scores: version.scorePoints ?? [], probabilities: version.probabilityPoints ?? [] });
    const startedInside = version.firstReceivedAt.getTime() - from.getTime() > DAY_MS;
    const days = (now.getTime() - (startedInside ? version.firstReceivedAt.getTime() : from.getTime())) / DAY_MS;
    const source: ModelVersionCapacity["calibration"]["source"] = map !== null ? "calibration_map" : version.scoreKind === "probability" ? "corrected_score" : "prior_hit_rate";
    const scoreCells: ScoreCell[] = (cellsByVersion.get(version.id) ?? []).map((cell) => {
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
        alerts: version.alerts,
        belowTheLineSamples: version.samples,
        alertsPerDay: version.alerts / days,
        trafficPerDay: plan.trafficPerDay,
        currencies: [...new Set((cellsByVersion.get(version.id) ?? []).map((cell) => cell.currency))].sort(),
        withoutExposure: version.withoutExposure,
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
