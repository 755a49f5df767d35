import { binIndex } from "./bin-index";
import { assertBinaryLabels, assertPositiveInteger, assertProbabilities, assertSameLength } from "./input-checks";

export type ReliabilityBin = {
  lower: number;
  upper: number;
  /** Alerts whose p falls in the bin. */
  n: number;
  /** Mean predicted probability in the bin; null when the bin is empty. */
  meanPredicted: number | null;
  /** Share of the bin's alerts labelled fraud; null when the bin is empty. */
  observedRate: number | null;
};

/**
 * Equal-width bin edges on [0, 1], computed as i·(1/bins) exactly as numpy's linspace does
 * (so the third edge of ten is 0.30000000000000004, not 0.3). Using the same doubles as
 * scikit-learn is what makes a p of exactly 0.3 land in the same bin in both.
 */
function equalWidthEdges(bins: number): number[] {
  const step = 1 / bins;
  const edges = Array.from({ length: bins + 1 }, (_, i) => i * step);
  edges[bins] = 1;
  return edges;
}

function checkInputs(p: readonly number[], y: readonly number[]): void {
  assertSameLength(p, y, "p", "y");
  assertProbabilities(p, "p");
  assertBinaryLabels(y, "y");
}

/**
 * Reliability table: `bins` equal-width bins of p on [0, 1], each with its count, mean p and
 * observed fraud rate. Bins are closed on the right, (lower, upper], with p = 0 in the first bin
 * and p = 1 in the last, as in scikit-learn's `calibration_curve(strategy="uniform")`. Unlike
 * scikit-learn, empty bins are kept (with nulls) so that every model's table has the same rows.
 */
export function reliabilityTable(p: readonly number[], y: readonly number[], bins = 10): ReliabilityBin[] {
  assertPositiveInteger(bins, "bins");
  checkInputs(p, y);
  const edges = equalWidthEdges(bins);
  const inner = edges.slice(1, -1);
  const n = new Array<number>(bins).fill(0);
  const sumP = new Array<number>(bins).fill(0);
  const sumY = new Array<number>(bins).fill(0);
  p.forEach((pi, i) => {
    const b = binIndex(inner, pi);
    n[b] += 1;
    sumP[b] += pi;
    sumY[b] += y[i];
  });
  return n.map((count, b) => ({
    lower: edges[b],
    upper: edges[b + 1],
    n: count,
    meanPredicted: count === 0 ? null : sumP[b] / count,
    observedRate: count === 0 ? null : sumY[b] / count,
  }));
}

/**
 * Brier score in its one-class form (Brier 1950): mean of (p − y)² over labelled alerts, y = 1 for
 * fraud. It rewards both calibration and sharpness; lower is better. Null with no labels.
 */
export function brierScore(p: readonly number[], y: readonly number[]): number | null {
  checkInputs(p, y);
  if (p.length === 0) return null;
  let sum = 0;
  for (let i = 0; i < p.length; i++) sum += (p[i] - y[i]) ** 2;
  return sum / p.length;
}

/**
 * Expected calibration error over the reliability table's bins:
 * ECE = Σ_b (n_b / N)·|observed rate in b − mean p in b| (Naeini, Cooper & Hauskrecht 2015).
 * This is the one-class form on the fraud probability p. Guo et al. (2017) use a top-label
 * variant (confidence of the predicted class, max(p, 1 − p), against accuracy), which differs for
 * a binary model whenever p < 0.5; we use the Naeini form because p itself is what drives the
 * queue. Null with no labels.
 */
export function expectedCalibrationError(p: readonly number[], y: readonly number[], bins = 10): number | null {
  const table = reliabilityTable(p, y, bins);
  const total = p.length;
  if (total === 0) return null;
  let ece = 0;
  for (const bin of table) {
    if (bin.n === 0) continue;
    ece += (bin.n / total) * Math.abs(bin.observedRate! - bin.meanPredicted!);
  }
  return ece;
}
