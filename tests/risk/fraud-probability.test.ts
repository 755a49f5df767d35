import { describe, expect, it } from "vitest";
import { fraudProbability, type FraudProbabilityInput } from "@/lib/risk/fraud-probability";
import type { IsotonicCalibrationMap } from "@/lib/risk/isotonic-calibration";

// Rules from DESIGN.md §4, "Probability of fraud for an alert".
const map: IsotonicCalibrationMap = { scores: [0.1, 0.5, 0.9], probabilities: [0.01, 0.2, 0.6] };

const probabilityModel: Omit<FraudProbabilityInput, "score"> = {
  scoreKind: "probability",
  negativeSamplingRate: 0.1,
  priorHitRate: null,
  calibrationMap: null,
};

const anomalyModel: Omit<FraudProbabilityInput, "score"> = {
  scoreKind: "anomaly",
  negativeSamplingRate: 1,
  priorHitRate: 0.04,
  calibrationMap: null,
};

describe("fraud probability for an alert", () => {
  it("uses the calibration map when there is one, for either score kind", () => {
    // Hand-worked interpolation: 0.3 is halfway from 0.1 to 0.5, so 0.01 + 0.5 × (0.2 − 0.01) = 0.105.
    expect(fraudProbability({ ...probabilityModel, score: 0.3, calibrationMap: map })).toEqual({
      probability: expect.closeTo(0.105, 12),
      calibrated: true,
      source: "calibration_map",
    });
    // An anomaly score above the fitted range is clipped to the last knot: 0.6.
    expect(fraudProbability({ ...anomalyModel, score: 3.7, calibrationMap: map })).toEqual({
      probability: 0.6,
      calibrated: true,
      source: "calibration_map",
    });
  });

  it("falls back to the undersampling-corrected score for probability kinds", () => {
    // s = 0.5, β = 0.1: 0.05 / (0.05 − 0.5 + 1) = 1/11 (Dal Pozzolo et al. 2015).
    const result = fraudProbability({ ...probabilityModel, score: 0.5 });
    expect(result.probability).toBeCloseTo(1 / 11, 15);
    expect(result).toMatchObject({ calibrated: false, source: "corrected_score" });
  });

  it("falls back to the prior hit rate for anomaly kinds, whatever the score", () => {
    for (const score of [0, 0.5, 17.3, -2]) {
      expect(fraudProbability({ ...anomalyModel, score })).toEqual({ probability: 0.04, calibrated: false, source: "prior_hit_rate" });
    }
  });

  it("rejects impossible inputs", () => {
    expect(() => fraudProbability({ ...anomalyModel, priorHitRate: null, score: 1 })).toThrow(/prior hit rate/);
    expect(() => fraudProbability({ ...probabilityModel, score: 1.2 })).toThrow(/score/);
    expect(() => fraudProbability({ ...probabilityModel, score: Number.NaN })).toThrow(RangeError);
    expect(() => fraudProbability({ ...anomalyModel, score: Number.POSITIVE_INFINITY })).toThrow(RangeError);
    expect(() => fraudProbability({ ...probabilityModel, score: 0.5, negativeSamplingRate: 0 })).toThrow(/negativeSamplingRate/);
    expect(() => fraudProbability({ ...anomalyModel, score: 0.5, priorHitRate: 1.5 })).toThrow(/priorHitRate/);
    expect(() => fraudProbability({ ...anomalyModel, score: 0.5, scoreKind: "rank" as "anomaly" })).toThrow(/scoreKind/);
  });
});
