import { describe, expect, it } from "vitest";
import { hasEnoughLabelsToCalibrate } from "@/lib/risk/calibration-readiness";

describe("enough labels to calibrate", () => {
  // Arbitrary values for the test, not recommended defaults; the real ones come from Settings.
  const thresholds = { minLabels: 500, minPerClass: 30 };

  it("needs both the total and the per-class minimum, boundaries included", () => {
    expect(hasEnoughLabelsToCalibrate({ labelCount: 500, positives: 30, negatives: 470, ...thresholds })).toBe(true);
    expect(hasEnoughLabelsToCalibrate({ labelCount: 499, positives: 30, negatives: 469, ...thresholds })).toBe(false);
    expect(hasEnoughLabelsToCalibrate({ labelCount: 5_000, positives: 29, negatives: 4_971, ...thresholds })).toBe(false);
    expect(hasEnoughLabelsToCalibrate({ labelCount: 5_000, positives: 4_971, negatives: 29, ...thresholds })).toBe(false);
  });

  it("rejects inconsistent or impossible counts", () => {
    expect(() => hasEnoughLabelsToCalibrate({ labelCount: 10, positives: 3, negatives: 3, ...thresholds })).toThrow(/positives \+ negatives/);
    expect(() => hasEnoughLabelsToCalibrate({ labelCount: 1.5, positives: 1, negatives: 0.5, ...thresholds })).toThrow(RangeError);
    expect(() => hasEnoughLabelsToCalibrate({ labelCount: 2, positives: -1, negatives: 3, ...thresholds })).toThrow(RangeError);
    expect(() => hasEnoughLabelsToCalibrate({ labelCount: 2, positives: 1, negatives: 1, minLabels: 1, minPerClass: 0 })).toThrow(/minPerClass/);
    expect(() => hasEnoughLabelsToCalibrate({ labelCount: 2, positives: 1, negatives: 1, minLabels: Number.NaN, minPerClass: 1 })).toThrow(RangeError);
  });
});
