import { describe, expect, it } from "vitest";
import { brierScore, expectedCalibrationError, reliabilityTable } from "@/lib/metrics";

describe("reliability table", () => {
  it("reproduces scikit-learn's test_calibration_curve example", () => {
    // sklearn/tests/test_calibration.py lines 375–381 (scikit-learn 1.2.1): n_bins = 2,
    // prob_true [0, 1], prob_pred [0.1, 0.9].
    const table = reliabilityTable([0.0, 0.1, 0.2, 0.8, 0.9, 1.0], [0, 0, 0, 1, 1, 1], 2);
    expect(table.map((b) => b.observedRate)).toEqual([0, 1]);
    expect(table[0].meanPredicted).toBeCloseTo(0.1, 12);
    expect(table[1].meanPredicted).toBeCloseTo(0.9, 12);
    expect(table.map((b) => b.n)).toEqual([3, 3]);
  });

  it("puts a p on an edge in the lower bin and p = 1 in the last, as scikit-learn does", () => {
    // sklearn/calibration.py line 1025: edges = np.linspace(0, 1, n_bins + 1); line 1032:
    // binids = np.searchsorted(bins[1:-1], y_prob) (side "left"), so bins are (lower, upper] and
    // p = 0.1 belongs to the first bin. Hand-worked with 10 bins:
    //   0.05, 0.1 → bin 0 (n 2, mean p 0.075, rate 0)      0.15 → bin 1 (n 1, 0.15, rate 1)
    //   0.3       → bin 2, because linspace's third edge is 0.30000000000000004 (n 1, 0.3, rate 1)
    //   0.95, 1.0 → bin 9 (n 2, mean p 0.975, rate 1)
    const p = [0.05, 0.1, 0.15, 0.3, 0.95, 1.0];
    const y = [0, 0, 1, 1, 1, 1];
    const table = reliabilityTable(p, y);
    expect(table).toHaveLength(10);
    expect(table.map((b) => b.n)).toEqual([2, 1, 1, 0, 0, 0, 0, 0, 0, 2]);
    expect(table[0].meanPredicted).toBeCloseTo(0.075, 12);
    expect(table[0].observedRate).toBe(0);
    expect(table[2]).toMatchObject({ lower: 0.2, upper: 0.30000000000000004, n: 1, meanPredicted: 0.3 });
    expect(table[9].meanPredicted).toBeCloseTo(0.975, 12);
    expect(table[9]).toMatchObject({ upper: 1, observedRate: 1 });
    // Empty bins are kept with nulls (scikit-learn drops them, calibration.py lines 1038–1040).
    expect(table[5]).toMatchObject({ n: 0, meanPredicted: null, observedRate: null });
  });

  it("puts p = 0.5 in the first of two bins", () => {
    // Same rule (sklearn/calibration.py line 1032) at the middle edge: 0.5 ≤ 0.5 → bin 0.
    expect(reliabilityTable([0.5], [1], 2).map((b) => b.n)).toEqual([1, 0]);
  });

  it("keeps every row for an empty window", () => {
    const table = reliabilityTable([], []);
    expect(table).toHaveLength(10);
    expect(table.every((b) => b.n === 0 && b.meanPredicted === null)).toBe(true);
  });

  it("rejects probabilities outside [0, 1], labels other than 0/1 and mismatched lengths", () => {
    expect(() => reliabilityTable([1.2], [1])).toThrow(/p\[0\] must be a probability/);
    expect(() => reliabilityTable([-0.1], [1])).toThrow(RangeError);
    expect(() => reliabilityTable([0.5], [2])).toThrow(/y\[0\] must be 0 or 1/);
    expect(() => reliabilityTable([0.5, 0.2], [1])).toThrow(/same length/);
    expect(() => reliabilityTable([0.5], [1], 0)).toThrow(/bins/);
  });
});

describe("Brier score", () => {
  it("matches scikit-learn's test_brier_score_loss example", () => {
    // sklearn/metrics/tests/test_classification.py lines 2587–2592 (scikit-learn 1.2.1):
    // true_score = ||y − p||² / 6. Hand-worked: 0.01 + 0.04 + 0.01 + 0.09 + 0 + 0.0025 = 0.1525,
    // / 6 = 0.0254166…
    const y = [0, 1, 1, 0, 1, 1];
    const p = [0.1, 0.8, 0.9, 0.3, 1.0, 0.95];
    expect(brierScore(p, y)).toBeCloseTo(0.1525 / 6, 12);
    // Line 2591: a perfect forecast scores 0.
    expect(brierScore(y, y)).toBe(0);
  });

  it("matches scikit-learn's one-alert and docstring examples", () => {
    // test_classification.py lines 2614–2615: [0] with 0.4 → 0.16; [1] with 0.4 → 0.36.
    expect(brierScore([0.4], [0])).toBeCloseTo(0.16, 12);
    expect(brierScore([0.4], [1])).toBeCloseTo(0.36, 12);
    // sklearn/metrics/_classification.py lines 2861–2865 (docstring): 0.037… ; hand-worked
    // (0.01 + 0.01 + 0.04 + 0.09) / 4 = 0.0375.
    expect(brierScore([0.1, 0.9, 0.8, 0.3], [0, 1, 1, 0])).toBeCloseTo(0.0375, 12);
  });

  it("has no value without labels", () => {
    expect(brierScore([], [])).toBeNull();
  });
});

describe("expected calibration error", () => {
  it("weights each bin's gap between observed rate and mean p by its share of alerts", () => {
    // Naeini, Cooper & Hauskrecht (2015) form. Hand-worked on the table above:
    // (2/6)|0 − 0.075| + (1/6)|1 − 0.15| + (1/6)|1 − 0.3| + (2/6)|1 − 0.975|
    // = (0.15 + 0.85 + 0.7 + 0.05) / 6 = 1.75 / 6 = 0.291666…
    const p = [0.05, 0.1, 0.15, 0.3, 0.95, 1.0];
    const y = [0, 0, 1, 1, 1, 1];
    expect(expectedCalibrationError(p, y)).toBeCloseTo(1.75 / 6, 12);
  });

  it("is zero when every bin's rate equals its mean p", () => {
    // Hand-worked: bin (0.2, 0.3] holds p = 0.25 four times with one fraud → rate 0.25.
    expect(expectedCalibrationError([0.25, 0.25, 0.25, 0.25], [1, 0, 0, 0])).toBe(0);
  });

  it("uses the fraud probability itself, not the top-label confidence", () => {
    // Hand-worked, one bin of width 1, p = (0.45, 0.55), labels (0, 1):
    //   ours (one-class, on p): |mean label 0.5 − mean p 0.5| = 0.
    //   top-label (Guo et al. 2017): confidences max(p, 1 − p) = 0.55, 0.55; predicted classes 0, 1
    //   are both right, accuracy 1 → |1 − 0.55| = 0.45.
    expect(expectedCalibrationError([0.45, 0.55], [0, 1], 1)).toBeCloseTo(0, 12);
  });

  it("has no value without labels", () => {
    expect(expectedCalibrationError([], [])).toBeNull();
  });
});
