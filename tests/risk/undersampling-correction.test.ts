import { describe, expect, it } from "vitest";
import { correctUndersampledScore } from "@/lib/risk/undersampling-correction";
import { seededRandom, uniformOpen } from "./seeded-random";

// Derivation used by the independent checks below (Bayes' rule; Dal Pozzolo, Caelen, Johnson,
// Bontempi 2015, "Calibrating Probability with Undersampling for Unbalanced Classification", §II,
// equation numbers not checked: from memory).
// Let s = 1 mean "kept in the undersampled training set". Every positive is kept, a negative with
// probability β. With p = P(+|x):
//   p_s = P(+|x, s=1) = P(s=1|+)·p / (P(s=1|+)·p + P(s=1|−)·(1 − p)) = p / (p + β(1 − p)).
// Solving for p:  p_s·p + p_s·β − p_s·β·p = p  ⇒  p·(1 − p_s + p_s·β) = p_s·β
//   ⇒  p = β·p_s / (β·p_s − p_s + 1),  the formula under test.
// So mapping a true p forward with the Bayes expression and back with the function must return p.
function undersampledProbability(p: number, beta: number): number {
  return p / (p + beta * (1 - p));
}

describe("correcting a score from a model trained on undersampled negatives", () => {
  it("leaves the score unchanged when no negatives were dropped (β = 1)", () => {
    const random = seededRandom(1);
    for (let i = 0; i < 1000; i++) {
      const s = random();
      expect(correctUndersampledScore({ score: s, negativeSamplingRate: 1 })).toBe(s);
    }
  });

  it("matches hand-worked values of β·s / (β·s − s + 1)", () => {
    // Worked by hand from the formula in DESIGN.md §4 (Dal Pozzolo et al. 2015):
    // s = 0.5, β = 0.1:  0.05 / (0.05 − 0.5 + 1) = 0.05 / 0.55 = 1/11 = 0.0909…
    expect(correctUndersampledScore({ score: 0.5, negativeSamplingRate: 0.1 })).toBeCloseTo(1 / 11, 15);
    // s = 0.9, β = 0.2:  0.18 / (0.18 − 0.9 + 1) = 0.18 / 0.28 = 9/14 = 0.642857…
    expect(correctUndersampledScore({ score: 0.9, negativeSamplingRate: 0.2 })).toBeCloseTo(9 / 14, 15);
    // s = 0.2, β = 0.01: 0.002 / (0.002 − 0.2 + 1) = 0.002 / 0.802 = 1/401 = 0.0024937…
    expect(correctUndersampledScore({ score: 0.2, negativeSamplingRate: 0.01 })).toBeCloseTo(1 / 401, 15);
    // s = 0.75, β = 0.5: 0.375 / (0.375 − 0.75 + 1) = 0.375 / 0.625 = 0.6
    expect(correctUndersampledScore({ score: 0.75, negativeSamplingRate: 0.5 })).toBeCloseTo(0.6, 15);
  });

  it("keeps certainty certain: s = 0 stays 0 and s = 1 stays 1 for any β", () => {
    // From the formula: s = 0 gives 0 / 1; s = 1 gives β / (β − 1 + 1) = 1.
    for (const beta of [0.001, 0.1, 0.5, 1]) {
      expect(correctUndersampledScore({ score: 0, negativeSamplingRate: beta })).toBe(0);
      expect(correctUndersampledScore({ score: 1, negativeSamplingRate: beta })).toBe(1);
    }
  });

  it("recovers the true probability after the Bayes forward map (round trip p → s → p)", () => {
    // Independent check: the forward map is Bayes' rule written out above, not the code under test.
    const random = seededRandom(2015);
    for (let i = 0; i < 5000; i++) {
      const p = random();
      const beta = uniformOpen(random, 0, 1);
      const s = undersampledProbability(p, beta);
      expect(correctUndersampledScore({ score: s, negativeSamplingRate: beta })).toBeCloseTo(p, 12);
    }
  });

  it("agrees with the authors' published R code for the corrected threshold", () => {
    // dalpozz/warping, R/sampling.R, function `undersampling` (stored copy at commit 23777de, lines
    // 120 and 123 by my count): `prob.cal <- beta*prob.under / (beta*prob.under - prob.under +1)` and
    // `th.cal <- pi.under*beta / (pi.under*(beta - 1 ) + 1)`. The second maps the positive share
    // after undersampling back to the original share; with π_s = π / (π + β(1 − π)) it must give π.
    const cases = [
      { pi: 0.002, beta: 0.01 },
      { pi: 0.01, beta: 0.05 },
      { pi: 0.1, beta: 0.5 },
      { pi: 0.3, beta: 0.9 },
    ];
    for (const { pi, beta } of cases) {
      const piUnder = pi / (pi + beta * (1 - pi));
      const thCal = (piUnder * beta) / (piUnder * (beta - 1) + 1);
      expect(thCal).toBeCloseTo(pi, 14);
      expect(correctUndersampledScore({ score: piUnder, negativeSamplingRate: beta })).toBeCloseTo(pi, 14);
    }
  });

  it("agrees with Elkan's change-of-base-rate formula", () => {
    // Elkan 2001, "The Foundations of Cost-Sensitive Learning", §4 (Theorem 2 there; from memory):
    // a probability p estimated where the base rate is b becomes p' = b'(p − p·b) / (b − p·b + b'·p − b·b')
    // where the base rate is b'. Undersampling turns the base rate π into b = π / (π + β(1 − π)).
    const random = seededRandom(2001);
    for (let i = 0; i < 2000; i++) {
      const pi = uniformOpen(random, 0, 0.5);
      const beta = uniformOpen(random, 0, 1);
      const s = random();
      const b = pi / (pi + beta * (1 - pi));
      const elkan = (pi * (s - s * b)) / (b - s * b + pi * s - b * pi);
      expect(correctUndersampledScore({ score: s, negativeSamplingRate: beta })).toBeCloseTo(elkan, 12);
    }
  });

  it("preserves the order of scores and never raises a score", () => {
    // Property of the formula: dp/ds = β / (β·s − s + 1)² > 0, and p ≤ s because the denominator
    // 1 − s(1 − β) ≥ β when β ≤ 1 (worked by hand).
    const random = seededRandom(7);
    for (let i = 0; i < 5000; i++) {
      const beta = uniformOpen(random, 0, 1);
      const a = random();
      const b = random();
      const pa = correctUndersampledScore({ score: a, negativeSamplingRate: beta });
      const pb = correctUndersampledScore({ score: b, negativeSamplingRate: beta });
      if (a < b) expect(pa).toBeLessThanOrEqual(pb);
      if (a > b) expect(pa).toBeGreaterThanOrEqual(pb);
      expect(pa).toBeLessThanOrEqual(a);
      expect(pa).toBeGreaterThanOrEqual(0);
    }
  });

  it("lowers a score more the fewer negatives were kept", () => {
    const random = seededRandom(8);
    for (let i = 0; i < 2000; i++) {
      const s = uniformOpen(random, 0, 1);
      const b1 = uniformOpen(random, 0, 1);
      const b2 = uniformOpen(random, 0, 1);
      const p1 = correctUndersampledScore({ score: s, negativeSamplingRate: b1 });
      const p2 = correctUndersampledScore({ score: s, negativeSamplingRate: b2 });
      if (b1 < b2) expect(p1).toBeLessThanOrEqual(p2);
    }
  });

  it("rejects impossible sampling rates and scores with a RangeError", () => {
    const bad: Array<[number, number]> = [
      [0.5, 0],
      [0.5, -0.1],
      [0.5, 1.01],
      [0.5, Number.NaN],
      [0.5, Number.POSITIVE_INFINITY],
      [Number.NaN, 0.5],
      [-0.01, 0.5],
      [1.01, 0.5],
      [Number.POSITIVE_INFINITY, 0.5],
    ];
    for (const [score, negativeSamplingRate] of bad) {
      expect(() => correctUndersampledScore({ score, negativeSamplingRate })).toThrow(RangeError);
    }
    expect(() => correctUndersampledScore({ score: 0.5, negativeSamplingRate: 0 })).toThrow(/negativeSamplingRate must be in \(0, 1\]/);
    expect(() => correctUndersampledScore({ score: Number.NaN, negativeSamplingRate: 0.5 })).toThrow(/score/);
  });
});
