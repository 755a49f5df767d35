// The reliability table from per-bin sums computed in SQL. lib/metrics computes the same table, Brier
// score and ECE from raw arrays; the feedback queries cannot ship every alert's p to JavaScript, so
// PostgreSQL returns n, Σp and Σy per bin and these helpers finish the job with the same bin edges.
import type { ReliabilityBin } from "@/lib/metrics";

/** Equal-width bins of p in the reliability table (DESIGN.md §4). */
export const CALIBRATION_BINS = 10;

/**
 * Inner edges of `bins` equal-width bins on [0, 1]: the same doubles as lib/metrics'
 * reliabilityTable (i·(1/bins), as numpy's linspace), so a p on an edge lands in the same bin in SQL
 * and in TypeScript. Bins are (lower, upper], p = 0 in the first.
 */
export function calibrationInnerEdges(bins = CALIBRATION_BINS): number[] {
  const step = 1 / bins;
  return Array.from({ length: bins - 1 }, (_, i) => (i + 1) * step);
}

export interface BinSums {
  bin: number;
  n: number;
  sumP: number;
  sumY: number;
}

/** Every bin, empty ones included (with nulls), as lib/metrics' reliabilityTable returns them. */
export function reliabilityBinsFromSums(sums: readonly BinSums[], bins = CALIBRATION_BINS): ReliabilityBin[] {
  const edges = [0, ...calibrationInnerEdges(bins), 1];
  return edges.slice(0, -1).map((lower, index) => {
    const row = sums.find((candidate) => candidate.bin === index);
    const n = row?.n ?? 0;
    return {
      lower,
      upper: edges[index + 1],
      n,
      meanPredicted: n === 0 ? null : row!.sumP / n,
      observedRate: n === 0 ? null : row!.sumY / n,
    };
  });
}

/**
 * ECE = Σ_b (n_b / N)·|observed rate in b − mean p in b| over the reliability table's bins (Naeini,
 * Cooper & Hauskrecht 2015, the binned one-class form on p; not the top-label variant of Guo et al.
 * 2017). The same sum as lib/metrics' expectedCalibrationError, run over bins instead of arrays;
 * tests/feedback checks that both agree.
 */
export function expectedCalibrationErrorOfBins(bins: readonly ReliabilityBin[]): number | null {
  const total = bins.reduce((sum, bin) => sum + bin.n, 0);
  if (total === 0) return null;
  let ece = 0;
  for (const bin of bins) {
    if (bin.n === 0) continue;
    ece += (bin.n / total) * Math.abs(bin.observedRate! - bin.meanPredicted!);
  }
  return ece;
}
