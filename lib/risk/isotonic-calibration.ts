import { assertFinite } from "./argument-checks";
import { sortIndicesByValueStable } from "./stable-index-sort";

/**
 * A fitted monotone map from model score to fraud probability: the knots of a piecewise-linear
 * function, `scores` strictly increasing. It carries the same numbers as scikit-learn's
 * `IsotonicRegression.X_thresholds_` / `y_thresholds_`, so a map fitted here and one fitted by a
 * model owner in Python can be compared knot by knot.
 */
export interface IsotonicCalibrationMap {
  scores: number[];
  probabilities: number[];
}

export interface CalibrationPoint {
  score: number;
  label: 0 | 1;
}

// Scores closer than this are treated as one score, as scikit-learn's `_make_unique` does with
// `np.finfo(float64).resolution`. Matching it keeps our knots identical to a Python fit of the same
// labels, and it stops two scores a rounding error apart from producing an almost vertical segment.
const SAME_SCORE_TOLERANCE = 1e-15;

/**
 * Isotonic (monotone non-decreasing) least-squares regression of `y` on `x` by
 * pool-adjacent-violators, reduced to the knots needed for linear interpolation.
 *
 * Semantics follow scikit-learn 1.2 `IsotonicRegression(increasing=True)`: points with weight 0
 * are dropped; points within 1e-15 of the smallest x of their run are averaged into one (weights
 * summed); PAV runs on those averages; then interior knots whose value equals both neighbours are
 * removed. Linear time: the sort is a radix sort of at most eight passes, PAV is O(n).
 */
export function fitIsotonicRegression(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  weights?: ArrayLike<number>,
): IsotonicCalibrationMap {
  if (x.length !== y.length) {
    throw new RangeError(`x and y must have the same length, got ${x.length} and ${y.length}`);
  }
  if (weights !== undefined && weights.length !== x.length) {
    throw new RangeError(`weights must have one entry per point, got ${weights.length} for ${x.length} points`);
  }
  // Checked inline rather than through assertFinite: building an argument name per point would cost
  // more than the fit itself at a million points.
  for (let i = 0; i < x.length; i++) {
    if (!Number.isFinite(x[i])) assertFinite(x[i], `x[${i}]`);
    if (!Number.isFinite(y[i])) assertFinite(y[i], `y[${i}]`);
    if (weights !== undefined && !(weights[i] >= 0 && weights[i] < Infinity)) {
      throw new RangeError(`weights[${i}] must be a finite number >= 0, got ${String(weights[i])}`);
    }
  }

  // A zero weight means "this point carries no evidence"; keeping it could still create a knot.
  const kept = new Uint32Array(x.length);
  let keptCount = 0;
  for (let i = 0; i < x.length; i++) {
    if (weights === undefined || weights[i] > 0) kept[keptCount++] = i;
  }
  if (keptCount === 0) {
    throw new RangeError("isotonic regression needs at least one point with a positive weight");
  }

  // Ordering by (x, y, original position) reproduces numpy's stable lexsort, so tied scores are
  // summed in the same order as scikit-learn and the floating-point averages agree to the last bit.
  // Two stable passes give that order: by the secondary key first, then by the primary key.
  const order = sortIndicesByValueStable(sortIndicesByValueStable(kept.subarray(0, keptCount), y), x);

  const { uniqueX, uniqueY, uniqueW } = averageTiedScores(order, x, y, weights);
  const fitted = poolAdjacentViolators(uniqueY, uniqueW);
  return dropRedundantKnots(uniqueX, fitted);
}

/**
 * Fits a calibration map on reviewed alerts: label 1 for `confirmed_fraud`, 0 for `legitimate`
 * (Zadrozny & Elkan 2002). `weights` lets below-the-line samples count 1/π each
 * (Horvitz–Thompson), so a sample drawn with probability π stands for the 1/π alerts like it.
 */
export function fitIsotonicCalibration(
  points: readonly CalibrationPoint[],
  weights?: ArrayLike<number>,
): IsotonicCalibrationMap {
  if (points.length === 0) {
    throw new RangeError("a calibration map needs at least one labelled point");
  }
  const scores = new Float64Array(points.length);
  const labels = new Float64Array(points.length);
  for (let i = 0; i < points.length; i++) {
    const { score, label } = points[i];
    if (!Number.isFinite(score)) assertFinite(score, `points[${i}].score`);
    if (label !== 0 && label !== 1) {
      throw new RangeError(`points[${i}].label must be 0 or 1, got ${String(label)}`);
    }
    scores[i] = score;
    labels[i] = label;
  }
  return fitIsotonicRegression(scores, labels, weights);
}

/**
 * Fraud probability for a score: linear interpolation between knots, clipped to the first and last
 * knot outside the fitted range (scikit-learn `out_of_bounds="clip"`). Clipping, not extrapolating,
 * because labels exist only for alerted scores; beyond them the map has no evidence of a trend.
 */
export function predictIsotonic(map: IsotonicCalibrationMap, score: number): number {
  const { scores, probabilities } = map;
  const n = scores.length;
  if (n === 0 || probabilities.length !== n) {
    throw new RangeError(
      `calibration map must have as many probabilities as scores and at least one knot, got ${n} scores and ${probabilities.length} probabilities`,
    );
  }
  assertFinite(score, "score");

  if (score <= scores[0]) return probabilities[0];
  if (score >= scores[n - 1]) return probabilities[n - 1];

  // Largest j with scores[j] <= score; the early returns guarantee 0 <= j < n - 1.
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >>> 1;
    if (scores[mid] <= score) lo = mid;
    else hi = mid;
  }
  if (score === scores[lo]) return probabilities[lo];
  // Same expression and order of operations as numpy's `interp`, so results agree bit for bit.
  const slope = (probabilities[lo + 1] - probabilities[lo]) / (scores[lo + 1] - scores[lo]);
  return slope * (score - scores[lo]) + probabilities[lo];
}

/**
 * Checks a map that arrives from storage or over the wire before it is trusted for predictions.
 * Returns the same map so it can be used inline.
 */
export function assertIsotonicCalibrationMap(map: IsotonicCalibrationMap): IsotonicCalibrationMap {
  const { scores, probabilities } = map;
  if (!Array.isArray(scores) || !Array.isArray(probabilities) || scores.length === 0 || scores.length !== probabilities.length) {
    throw new RangeError("calibration map must have equally long, non-empty scores and probabilities");
  }
  for (let i = 0; i < scores.length; i++) {
    assertFinite(scores[i], `scores[${i}]`);
    const p = probabilities[i];
    if (!Number.isFinite(p) || p < 0 || p > 1) {
      throw new RangeError(`probabilities[${i}] must be a probability in [0, 1], got ${String(p)}`);
    }
    if (i > 0 && !(scores[i] > scores[i - 1])) {
      throw new RangeError(`scores must be strictly increasing, but scores[${i}] = ${scores[i]} follows ${scores[i - 1]}`);
    }
    if (i > 0 && p < probabilities[i - 1]) {
      throw new RangeError(`probabilities must be non-decreasing, but probabilities[${i}] = ${p} follows ${probabilities[i - 1]}`);
    }
  }
  return map;
}

function averageTiedScores(
  order: Uint32Array,
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  weights: ArrayLike<number> | undefined,
): { uniqueX: Float64Array; uniqueY: Float64Array; uniqueW: Float64Array } {
  const n = order.length;
  const uniqueX = new Float64Array(n);
  const uniqueY = new Float64Array(n);
  const uniqueW = new Float64Array(n);
  let groups = 0;
  // Each group is anchored at its smallest x: a run of scores 0.4e-15 apart is not chained into one
  // long group, and the knot is placed at a score that really occurred.
  let anchor = x[order[0]];
  let sumW = 0;
  let sumWY = 0;
  for (let k = 0; k < n; k++) {
    const i = order[k];
    const w = weights === undefined ? 1 : weights[i];
    if (x[i] - anchor >= SAME_SCORE_TOLERANCE) {
      uniqueX[groups] = anchor;
      uniqueY[groups] = sumWY / sumW;
      uniqueW[groups] = sumW;
      groups++;
      anchor = x[i];
      sumW = w;
      sumWY = y[i] * w;
    } else {
      sumW += w;
      sumWY += y[i] * w;
    }
  }
  uniqueX[groups] = anchor;
  uniqueY[groups] = sumWY / sumW;
  uniqueW[groups] = sumW;
  groups++;
  return { uniqueX: uniqueX.subarray(0, groups), uniqueY: uniqueY.subarray(0, groups), uniqueW: uniqueW.subarray(0, groups) };
}

/**
 * Pool-adjacent-violators in the active-set form of Best & Chakravarti, "Active set algorithms for
 * isotonic regression; a unifying framework" (1990, section 3; cited in sklearn/isotonic.py line
 * 117), the form scikit-learn's `_isotonic.pyx` implements (read in the scikit-learn repository;
 * 1.2.1 installs only the compiled module): from a block, absorb the whole run of blocks that do not rise, replace
 * them by their weighted mean, then step back one block because the new mean may now violate the
 * order with its left neighbour. Each block boundary is removed at most once, so this is O(n).
 *
 * Blocks are kept in place: `blockEdge[first] = last` and `blockEdge[last] = first`, and the mean
 * and total weight of a block live at its first index. Pooling a run at once, rather than pairwise,
 * keeps the floating-point sums in scikit-learn's order, which matters because two blocks whose
 * means tie exactly are merged and a tie lost to rounding would leave an extra knot.
 */
function poolAdjacentViolators(values: Float64Array, blockWeights: Float64Array): Float64Array {
  const n = values.length;
  const mean = values.slice();
  const weight = blockWeights.slice();
  const blockEdge = new Int32Array(n);
  for (let i = 0; i < n; i++) blockEdge[i] = i;

  let start = 0;
  while (start < n) {
    let next = blockEdge[start] + 1;
    if (next === n) break;
    if (mean[start] < mean[next]) {
      start = next;
      continue;
    }
    let pooledWY = weight[start] * mean[start];
    let pooledW = weight[start];
    for (;;) {
      const absorbedMean = mean[next];
      pooledWY += weight[next] * mean[next];
      pooledW += weight[next];
      next = blockEdge[next] + 1;
      if (next === n || absorbedMean < mean[next]) break;
    }
    const last = next - 1;
    mean[start] = pooledWY / pooledW;
    weight[start] = pooledW;
    blockEdge[start] = last;
    blockEdge[last] = start;
    if (start > 0) start = blockEdge[start - 1];
  }

  const fitted = new Float64Array(n);
  for (let first = 0; first < n; ) {
    const last = blockEdge[first];
    fitted.fill(mean[first], first, last + 1);
    first = last + 1;
  }
  return fitted;
}

// Inside a flat stretch only its two ends matter for interpolation; dropping the rest makes the map
// small enough to store per model version and to search per alert.
function dropRedundantKnots(x: Float64Array, fitted: Float64Array): IsotonicCalibrationMap {
  const n = x.length;
  const scores: number[] = [];
  const probabilities: number[] = [];
  for (let i = 0; i < n; i++) {
    const interior = i > 0 && i < n - 1;
    if (interior && fitted[i] === fitted[i - 1] && fitted[i] === fitted[i + 1]) continue;
    scores.push(x[i]);
    probabilities.push(fitted[i]);
  }
  return { scores, probabilities };
}
