import { describe, expect, it } from "vitest";
import { expectedCalibrationError, rate, reliabilityTable } from "@/lib/metrics";
import { calibrationInnerEdges, expectedCalibrationErrorOfBins, reliabilityBinsFromSums, type BinSums } from "@/lib/feedback/calibration-bins";
import { standsOut } from "@/lib/feedback/stands-out";
import { binIndex } from "@/lib/metrics/bin-index";

/** What the SQL does: count, Σp and Σy per (lower, upper] bin. */
function sumsOf(p: number[], y: number[]): BinSums[] {
  const sums = new Map<number, BinSums>();
  p.forEach((pi, i) => {
    const bin = binIndex(calibrationInnerEdges(), pi);
    const row = sums.get(bin) ?? { bin, n: 0, sumP: 0, sumY: 0 };
    row.n += 1;
    row.sumP += pi;
    row.sumY += y[i];
    sums.set(bin, row);
  });
  return [...sums.values()];
}

describe("reliability table from per-bin sums", () => {
  it("agrees with lib/metrics on the raw arrays, values on bin edges included", () => {
    const p = [0, 0.1, 0.2, 0.3, 0.30000000000000004, 0.4, 0.55, 0.7, 0.8, 0.93, 1, 0.05, 0.62, 0.62];
    const y = [0, 0, 1, 0, 1, 1, 0, 1, 1, 1, 1, 0, 0, 1];
    const fromSums = reliabilityBinsFromSums(sumsOf(p, y));
    expect(fromSums).toEqual(reliabilityTable(p, y));
    expect(expectedCalibrationErrorOfBins(fromSums)).toBeCloseTo(expectedCalibrationError(p, y)!, 14);
  });

  it("has no ECE without labels", () => {
    expect(expectedCalibrationErrorOfBins(reliabilityBinsFromSums([]))).toBeNull();
  });
});

describe("who stands out from the team", () => {
  it("only a reviewer whose whole interval lies beyond the team's rate", () => {
    const team = rate(80, 200); // 0.40
    // 45 of 50 = 0.90, Wilson [0.79, 0.96]: above. 2 of 2 = 1.0, Wilson [0.34, 1]: holds 0.40, not flagged.
    expect(standsOut(rate(45, 50), team)).toBe("above");
    expect(standsOut(rate(2, 2), team)).toBeNull();
    expect(standsOut(rate(5, 60), team)).toBe("below");
    expect(standsOut(rate(0, 0), team)).toBeNull();
    expect(standsOut(rate(3, 4), rate(0, 0))).toBeNull();
  });
});
