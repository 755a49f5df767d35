// Capacity planner (DESIGN.md §4 Workload): what a daily review capacity K buys, from a model
// version's recent score distribution and its calibration. Pure: the caller bins the traffic in
// PostgreSQL, turns each bin's score into a calibrated probability with lib/risk, and passes cells.
//
// The model of a day: every scored transaction the version saw recently is a cell member, counted
// per day. Alerts (above the version's current alert threshold) count 1 each; below-the-line
// samples count 1/π each (Horvitz–Thompson), so the cells also describe the traffic under the
// threshold that the queue never sees. Reviewing a transaction "catches" its expected loss p·E: the
// money at stake that review reaches, whatever the analyst then decides.
//
// Two questions, two pools:
// - Threshold for K: rank ALL cells by score and take K a day. The lowest score reached is the alert
//   threshold that yields about K alerts a day; its precision is the mean calibrated p of those K.
//   With K above today's alert volume this reaches below the current threshold, where only the
//   below-the-line samples speak and the calibration has few labels: callers must say so.
// - Ordering at K: the queue as it arrives now (alerted cells only). Working K of them by score
//   versus by expected loss; by expected loss always catches at least as much (it is the top-K sum
//   of the same numbers), and the difference is the value of ordering by money at stake.
//
// A cell may be cut: when K falls inside a cell, that fraction of its members is reviewed, so the
// answer is piecewise linear in K instead of jumping from bin to bin.
import { assertFinite, assertNonNegative } from "./input-checks";

export type WorkOrder = "score" | "expected_loss";

export interface ScoreCell {
  /** The score the cell stands for (e.g. the mean score of the transactions binned into it). */
  score: number;
  /** Transactions a day the cell stands for (alerts 1 each, below-the-line samples 1/π each, ÷ days). */
  perDay: number;
  /** Calibrated fraud probability at `score`. */
  probability: number;
  /** Mean exposure of the cell's transactions, in minor units. */
  exposureMinor: number;
  /** True when the cell's transactions are alerts at the current threshold (they reach the queue). */
  alerted: boolean;
}

export interface WorkedCapacity {
  capacityPerDay: number;
  /** min(capacity, what the pool holds). */
  reviewedPerDay: number;
  /** Σ p over the reviewed transactions. */
  expectedFraudsPerDay: number;
  /** Σ p·E over the reviewed transactions, minor units per day. */
  expectedLossCaughtPerDayMinor: number;
  /** Mean calibrated p of the reviewed transactions; null when nothing is reviewed. */
  precision: number | null;
  /** Lowest score among the cells reached (in score order: the cut cell's); null when nothing is reviewed. */
  lowestScoreReached: number | null;
  /** The pool holds fewer than `capacityPerDay` transactions a day: every one of them is reviewed. */
  capacityExceedsPool: boolean;
}

export interface ThresholdForCapacity extends WorkedCapacity {
  /** Alert when score ≥ threshold: the lowest score reached when K a day are taken in score order. */
  threshold: number | null;
  /** Transactions a day with a score at or above the threshold (≥ K when the cut falls inside a cell). */
  alertsPerDayAtThreshold: number;
  /** The K reach cells that are not alerted today: the threshold would have to come down. */
  reachesBelowCurrentAlerts: boolean;
}

export interface CapacityCurvePoint {
  capacityPerDay: number;
  /** Expected loss caught a day with the threshold set for this capacity (all cells, score order). */
  thresholdForCapacityMinor: number;
  /** Today's queue worked by score. */
  queueByScoreMinor: number;
  /** Today's queue worked by expected loss. */
  queueByExpectedLossMinor: number;
}

export interface CapacityPlan {
  capacityPerDay: number;
  /** Alerts a day at the current threshold (the alerted cells). */
  queuePerDay: number;
  /** Transactions a day that all cells stand for. */
  trafficPerDay: number;
  /** Expected loss a day in today's queue, all of it. */
  queueExpectedLossPerDayMinor: number;
  threshold: ThresholdForCapacity;
  queueByScore: WorkedCapacity;
  queueByExpectedLoss: WorkedCapacity;
  /** queueByExpectedLoss − queueByScore, minor units a day (≥ 0). */
  orderingGainPerDayMinor: number;
  curve: CapacityCurvePoint[];
}

/** Cells sorted once in a work order, with running totals, so any capacity is a binary search. */
interface Ranking {
  cells: ScoreCell[];
  /** cumulative[i] = totals over cells[0..i] inclusive. */
  cumDay: Float64Array;
  cumFrauds: Float64Array;
  cumLoss: Float64Array;
}

function assertCells(cells: readonly ScoreCell[]): void {
  cells.forEach((cell, i) => {
    assertFinite(cell.score, `cells[${i}].score`);
    assertNonNegative(cell.perDay, `cells[${i}].perDay`);
    assertNonNegative(cell.exposureMinor, `cells[${i}].exposureMinor`);
    if (!(cell.probability >= 0 && cell.probability <= 1)) {
      throw new RangeError(`cells[${i}].probability must be a probability in [0, 1], got ${cell.probability}`);
    }
  });
}

function rank(cells: readonly ScoreCell[], order: WorkOrder): Ranking {
  const key = order === "score" ? (cell: ScoreCell) => cell.score : (cell: ScoreCell) => cell.probability * cell.exposureMinor;
  // Stable order on equal keys (the caller's order), so the same cells always give the same answer.
  const sorted = cells
    .map((cell, index) => ({ cell, index }))
    .filter(({ cell }) => cell.perDay > 0)
    .sort((a, b) => key(b.cell) - key(a.cell) || a.index - b.index)
    .map(({ cell }) => cell);
  const n = sorted.length;
  const cumDay = new Float64Array(n);
  const cumFrauds = new Float64Array(n);
  const cumLoss = new Float64Array(n);
  let day = 0;
  let frauds = 0;
  let loss = 0;
  for (let i = 0; i < n; i++) {
    const cell = sorted[i];
    day += cell.perDay;
    frauds += cell.perDay * cell.probability;
    loss += cell.perDay * cell.probability * cell.exposureMinor;
    cumDay[i] = day;
    cumFrauds[i] = frauds;
    cumLoss[i] = loss;
  }
  return { cells: sorted, cumDay, cumFrauds, cumLoss };
}

function workRanking(ranking: Ranking, capacityPerDay: number): WorkedCapacity {
  const n = ranking.cells.length;
  const poolPerDay = n === 0 ? 0 : ranking.cumDay[n - 1];
  const empty: WorkedCapacity = {
    capacityPerDay,
    reviewedPerDay: 0,
    expectedFraudsPerDay: 0,
    expectedLossCaughtPerDayMinor: 0,
    precision: null,
    lowestScoreReached: null,
    capacityExceedsPool: capacityPerDay > poolPerDay,
  };
  if (capacityPerDay === 0 || n === 0) return empty;
  if (capacityPerDay >= poolPerDay) {
    return {
      ...empty,
      reviewedPerDay: poolPerDay,
      expectedFraudsPerDay: ranking.cumFrauds[n - 1],
      expectedLossCaughtPerDayMinor: ranking.cumLoss[n - 1],
      precision: ranking.cumFrauds[n - 1] / poolPerDay,
      lowestScoreReached: lowestScore(ranking.cells, n),
    };
  }
  // First cell whose running total reaches the capacity: it is the one that is cut.
  let lo = 0;
  let hi = n - 1;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (ranking.cumDay[mid] >= capacityPerDay) hi = mid;
    else lo = mid + 1;
  }
  const cut = ranking.cells[lo];
  const before = lo === 0 ? { day: 0, frauds: 0, loss: 0 } : { day: ranking.cumDay[lo - 1], frauds: ranking.cumFrauds[lo - 1], loss: ranking.cumLoss[lo - 1] };
  const takenFromCut = capacityPerDay - before.day;
  const frauds = before.frauds + takenFromCut * cut.probability;
  return {
    ...empty,
    reviewedPerDay: capacityPerDay,
    expectedFraudsPerDay: frauds,
    expectedLossCaughtPerDayMinor: before.loss + takenFromCut * cut.probability * cut.exposureMinor,
    precision: frauds / capacityPerDay,
    lowestScoreReached: lowestScore(ranking.cells, lo + 1),
  };
}

/** Lowest score among the first `count` cells (in score order that is simply the last one). */
function lowestScore(cells: readonly ScoreCell[], count: number): number {
  let lowest = Infinity;
  for (let i = 0; i < count; i++) if (cells[i].score < lowest) lowest = cells[i].score;
  return lowest;
}

function assertCapacity(capacityPerDay: number): void {
  assertNonNegative(capacityPerDay, "capacityPerDay");
}

/** Reviewing `capacityPerDay` transactions a day from `cells`, taken in `order`. */
export function workAtCapacity(cells: readonly ScoreCell[], capacityPerDay: number, order: WorkOrder): WorkedCapacity {
  assertCells(cells);
  assertCapacity(capacityPerDay);
  return workRanking(rank(cells, order), capacityPerDay);
}

function thresholdOf(allByScore: Ranking, cells: readonly ScoreCell[], capacityPerDay: number): ThresholdForCapacity {
  const worked = workRanking(allByScore, capacityPerDay);
  const threshold = worked.lowestScoreReached;
  let alertsPerDayAtThreshold = 0;
  let reachesBelowCurrentAlerts = false;
  if (threshold !== null) {
    for (const cell of cells) {
      if (cell.score >= threshold) {
        alertsPerDayAtThreshold += cell.perDay;
        if (!cell.alerted && cell.perDay > 0) reachesBelowCurrentAlerts = true;
      }
    }
  }
  return { ...worked, threshold, alertsPerDayAtThreshold, reachesBelowCurrentAlerts };
}

/**
 * The alert threshold that yields about `capacityPerDay` alerts a day over all cells (alerted and
 * below-the-line), with the precision and the expected loss caught a day when those K are reviewed.
 */
export function thresholdForCapacity(cells: readonly ScoreCell[], capacityPerDay: number): ThresholdForCapacity {
  assertCells(cells);
  assertCapacity(capacityPerDay);
  return thresholdOf(rank(cells, "score"), cells, capacityPerDay);
}

/** `points` capacities evenly spread from 0 to `top`, always including `mustInclude` values in range. */
export function capacityGrid(top: number, points: number, mustInclude: readonly number[] = []): number[] {
  assertNonNegative(top, "top");
  if (!Number.isInteger(points) || points < 2) throw new RangeError(`points must be an integer >= 2, got ${points}`);
  const grid = new Set<number>();
  for (let i = 0; i < points; i++) grid.add((top * i) / (points - 1));
  for (const value of mustInclude) if (value >= 0 && value <= top) grid.add(value);
  return [...grid].sort((a, b) => a - b);
}

/** Expected loss caught a day against capacity, for the threshold rule and for today's queue in both orders. */
export function capacityCurve(cells: readonly ScoreCell[], capacities: readonly number[]): CapacityCurvePoint[] {
  assertCells(cells);
  capacities.forEach((capacity, i) => assertNonNegative(capacity, `capacities[${i}]`));
  const all = rank(cells, "score");
  const queue = cells.filter((cell) => cell.alerted);
  const queueScore = rank(queue, "score");
  const queueLoss = rank(queue, "expected_loss");
  return capacities.map((capacityPerDay) => ({
    capacityPerDay,
    thresholdForCapacityMinor: workRanking(all, capacityPerDay).expectedLossCaughtPerDayMinor,
    queueByScoreMinor: workRanking(queueScore, capacityPerDay).expectedLossCaughtPerDayMinor,
    queueByExpectedLossMinor: workRanking(queueLoss, capacityPerDay).expectedLossCaughtPerDayMinor,
  }));
}

export interface PlanCapacityInput {
  cells: readonly ScoreCell[];
  capacityPerDay: number;
  /** Points of the curve (default 41), from 0 to twice the larger of K and today's alert volume, capped at the traffic. */
  curvePoints?: number;
}

/** Everything the capacity planner shows for one model version at capacity K. */
export function planCapacity({ cells, capacityPerDay, curvePoints = 41 }: PlanCapacityInput): CapacityPlan {
  assertCells(cells);
  assertCapacity(capacityPerDay);
  const queue = cells.filter((cell) => cell.alerted);
  const all = rank(cells, "score");
  const queueScore = rank(queue, "score");
  const queueLoss = rank(queue, "expected_loss");
  const last = (ranking: Ranking, values: Float64Array) => (ranking.cells.length === 0 ? 0 : values[ranking.cells.length - 1]);
  const queuePerDay = last(queueScore, queueScore.cumDay);
  const trafficPerDay = last(all, all.cumDay);

  const queueByScore = workRanking(queueScore, capacityPerDay);
  const queueByExpectedLoss = workRanking(queueLoss, capacityPerDay);
  const top = Math.min(trafficPerDay, 2 * Math.max(capacityPerDay, queuePerDay));
  const capacities = capacityGrid(top, curvePoints, [capacityPerDay, queuePerDay]);
  const curve = capacities.map((capacity) => ({
    capacityPerDay: capacity,
    thresholdForCapacityMinor: workRanking(all, capacity).expectedLossCaughtPerDayMinor,
    queueByScoreMinor: workRanking(queueScore, capacity).expectedLossCaughtPerDayMinor,
    queueByExpectedLossMinor: workRanking(queueLoss, capacity).expectedLossCaughtPerDayMinor,
  }));

  return {
    capacityPerDay,
    queuePerDay,
    trafficPerDay,
    queueExpectedLossPerDayMinor: last(queueLoss, queueLoss.cumLoss),
    threshold: thresholdOf(all, cells, capacityPerDay),
    queueByScore,
    queueByExpectedLoss,
    // Never negative in exact arithmetic (top-K by EL maximises the sum); rounding could leave -1e-9.
    orderingGainPerDayMinor: Math.max(0, queueByExpectedLoss.expectedLossCaughtPerDayMinor - queueByScore.expectedLossCaughtPerDayMinor),
    curve,
  };
}
