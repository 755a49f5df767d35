import { binIndex } from "./bin-index";
import { assertFiniteValues, assertPositiveInteger } from "./input-checks";

/**
 * Share used in place of an empty bin's share so that ln(a/e) stays finite. Flooring empty bins at
 * a small constant such as 1e-4 is common practice for PSI, not a published standard. One empty
 * bin then adds a large but finite term: about 4.26 when the other window has half its scores there
 * ((0.5 − 1e-4)·ln(0.5 / 1e-4)), which is far past the act line either way.
 */
export const PSI_EMPTY_BIN_SHARE = 1e-4;

/** Warn and act lines: common practice in credit-risk model monitoring, not a theorem. */
export const PSI_WATCH = 0.1;
export const PSI_ACT = 0.25;

export type PsiBin = {
  /** −Infinity for the first bin. Bins are (lower, upper]. */
  lower: number;
  /** +Infinity for the last bin. */
  upper: number;
  /** Share of the reference window in the bin, before any flooring. */
  expectedShare: number;
  /** Share of the current window in the bin, before any flooring. */
  actualShare: number;
};

export type PopulationStability = {
  psi: number;
  bins: PsiBin[];
  level: "stable" | "watch" | "act";
};

/**
 * Quantile of sorted values with linear interpolation between order statistics (Hyndman & Fan
 * type 7, numpy's default), so a second computation in numpy gives the same edges.
 */
function quantileOfSorted(sorted: readonly number[], q: number): number {
  const h = (sorted.length - 1) * q;
  const below = Math.floor(h);
  const above = Math.min(below + 1, sorted.length - 1);
  return sorted[below] + (h - below) * (sorted[above] - sorted[below]);
}

/**
 * Population stability index of the current window's scores against a reference window's:
 * PSI = Σ_i (a_i − e_i)·ln(a_i / e_i), with e_i and a_i the reference and current shares in bin i.
 *
 * Bins are cut at the reference quantiles (deciles by default) so each holds about the same
 * share of the reference; the outer bins are open (−∞, +∞) so a score outside the reference range
 * still counts. Scores with many ties (e.g. a model that outputs few distinct values) give equal
 * quantiles; duplicate edges are collapsed, so there may be fewer bins than asked for. Bins are
 * closed on the right, (lower, upper], as in the calibration table. An empty bin's share is
 * replaced by PSI_EMPTY_BIN_SHARE in the sum only; the returned shares are the real ones.
 */
export function populationStabilityIndex(
  reference: readonly number[],
  current: readonly number[],
  bins = 10,
): PopulationStability {
  assertPositiveInteger(bins, "bins");
  if (reference.length === 0) throw new RangeError("reference must contain at least one score");
  if (current.length === 0) throw new RangeError("current must contain at least one score");
  assertFiniteValues(reference, "reference");
  assertFiniteValues(current, "current");

  const sorted = [...reference].sort((a, b) => a - b);
  const innerEdges: number[] = [];
  for (let i = 1; i < bins; i++) {
    const edge = quantileOfSorted(sorted, i / bins);
    if (innerEdges.length === 0 || edge > innerEdges[innerEdges.length - 1]) innerEdges.push(edge);
  }

  const shares = (values: readonly number[]): number[] => {
    const counts = new Array<number>(innerEdges.length + 1).fill(0);
    for (const v of values) counts[binIndex(innerEdges, v)] += 1;
    return counts.map((c) => c / values.length);
  };
  const expected = shares(reference);
  const actual = shares(current);

  let psi = 0;
  const table: PsiBin[] = expected.map((e, i) => {
    const a = actual[i];
    const eUsed = e === 0 ? PSI_EMPTY_BIN_SHARE : e;
    const aUsed = a === 0 ? PSI_EMPTY_BIN_SHARE : a;
    psi += (aUsed - eUsed) * Math.log(aUsed / eUsed);
    return {
      lower: i === 0 ? Number.NEGATIVE_INFINITY : innerEdges[i - 1],
      upper: i === innerEdges.length ? Number.POSITIVE_INFINITY : innerEdges[i],
      expectedShare: e,
      actualShare: a,
    };
  });

  const level = psi >= PSI_ACT ? "act" : psi >= PSI_WATCH ? "watch" : "stable";
  return { psi, bins: table, level };
}
