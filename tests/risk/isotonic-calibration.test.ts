import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { z } from "zod";
import {
  assertIsotonicCalibrationMap,
  fitIsotonicCalibration,
  fitIsotonicRegression,
  predictIsotonic,
  type CalibrationPoint,
  type IsotonicCalibrationMap,
} from "@/lib/risk/isotonic-calibration";
import { seededRandom, shuffled } from "./seeded-random";

// Two outside references:
// 1. tests/reference/isotonic-cases.json, written by tests/reference/sklearn_isotonic.py with
//    scikit-learn 1.2.1 `IsotonicRegression(increasing=True, out_of_bounds="clip")`.
// 2. Worked examples from scikit-learn's own suite,
//    /usr/lib/python3/dist-packages/sklearn/tests/test_isotonic.py (1.2.1), cited by test and line.
// The semantics matched are those of sklearn/isotonic.py `_build_y` (lines 264-311: drop zero
// weights, lexsort, `_make_unique`, PAV, then keep an interior point only if its y differs from a
// neighbour) and `transform` (lines 390-393: clip to [X_min_, X_max_], then linear interpolation).

const referenceDir = fileURLToPath(new URL("../reference/", import.meta.url));
const fixturePath = path.join(referenceDir, "isotonic-cases.json");
const generatorPath = path.join(referenceDir, "sklearn_isotonic.py");
const SYSTEM_PYTHON = "/usr/bin/python3";

const fixtureSchema = z.object({
  sklearn_version: z.string(),
  cases: z.array(
    z.object({
      name: z.string(),
      scores: z.array(z.number()),
      labels: z.array(z.union([z.literal(0), z.literal(1)])),
      weights: z.array(z.number()).nullable(),
      X_thresholds_: z.array(z.number()),
      y_thresholds_: z.array(z.number()),
      queries: z.array(z.number()),
      predictions: z.array(z.number()),
    }),
  ),
});

function readFixture(file: string) {
  return fixtureSchema.parse(JSON.parse(readFileSync(file, "utf8")));
}

function sklearnAvailable(): boolean {
  const probe = spawnSync(SYSTEM_PYTHON, ["-c", "import sklearn"], { stdio: "ignore" });
  return probe.status === 0;
}

function points(scores: readonly number[], labels: ReadonlyArray<0 | 1>): CalibrationPoint[] {
  return scores.map((score, i) => ({ score, label: labels[i] }));
}

function predictAll(map: IsotonicCalibrationMap, queries: readonly number[]): number[] {
  return queries.map((q) => predictIsotonic(map, q));
}

describe("isotonic calibration against scikit-learn", () => {
  const fixture = readFixture(fixturePath);

  it("covers the edge cases the fixture promises", () => {
    // Guards the fixture itself: an edit that dropped these cases would weaken the comparison.
    expect(fixture.cases.length).toBeGreaterThanOrEqual(8);
    expect(fixture.cases.some((c) => c.labels.every((l) => l === 0))).toBe(true);
    expect(fixture.cases.some((c) => c.labels.every((l) => l === 1))).toBe(true);
    expect(fixture.cases.some((c) => c.weights !== null && c.weights.includes(0))).toBe(true);
    expect(fixture.cases.some((c) => new Set(c.scores).size < c.scores.length)).toBe(true);
    expect(fixture.cases.some((c) => c.X_thresholds_.length === 1)).toBe(true);
  });

  for (const c of fixture.cases) {
    it(`fits the same thresholds and predicts the same probabilities: ${c.name}`, () => {
      // Expected numbers: X_thresholds_, y_thresholds_ and predict() of scikit-learn 1.2.1 (fixture).
      const map = fitIsotonicCalibration(points(c.scores, c.labels), c.weights ?? undefined);
      expect(map.scores).toHaveLength(c.X_thresholds_.length);
      map.scores.forEach((s, i) => expect(Math.abs(s - c.X_thresholds_[i])).toBeLessThanOrEqual(1e-9));
      map.probabilities.forEach((p, i) => expect(Math.abs(p - c.y_thresholds_[i])).toBeLessThanOrEqual(1e-9));
      predictAll(map, c.queries).forEach((p, i) => expect(Math.abs(p - c.predictions[i])).toBeLessThanOrEqual(1e-9));
    });
  }

  // Skipped, not failed, where the system Python has no scikit-learn (e.g. a CI image without it):
  // the comparison above still runs against the committed fixture; only the freshness check needs
  // scikit-learn itself.
  it.skipIf(!sklearnAvailable())(
    "the committed fixture is what the generator produces today",
    () => {
      const dir = mkdtempSync(path.join(tmpdir(), "isotonic-cases-"));
      try {
        const out = path.join(dir, "isotonic-cases.json");
        const run = spawnSync(SYSTEM_PYTHON, [generatorPath, out], { encoding: "utf8" });
        expect(run.status, run.stderr).toBe(0);
        expect(readFixture(out)).toEqual(fixture);
        expect(JSON.parse(readFileSync(out, "utf8"))).toEqual(JSON.parse(readFileSync(fixturePath, "utf8")));
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    },
    60_000,
  );
});

describe("isotonic regression: scikit-learn's own worked examples", () => {
  function fitTransform(x: number[], y: number[], w?: number[]): number[] {
    return predictAll(fitIsotonicRegression(x, y, w), x);
  }

  it("pools violators: test_isotonic_regression", () => {
    // test_isotonic.py lines 113-115: y = [3, 7, 5, 9, 8, 7, 10] → [3, 6, 6, 8, 8, 8, 10].
    // By hand: 7 > 5 pool to 6; 9 > 8 > 7 pool to 8; 3 < 6 < 8 < 10.
    expect(fitTransform([0, 1, 2, 3, 4, 5, 6], [3, 7, 5, 9, 8, 7, 10])).toEqual([3, 6, 6, 8, 8, 8, 10]);
    // Lines 117-119: y = [10, 0, 2] → [4, 4, 4] (10 > 0 pool to 5, 5 > 2 pool to 12/3 = 4).
    expect(fitTransform([0, 1, 2], [10, 0, 2])).toEqual([4, 4, 4]);
  });

  it("averages tied scores before pooling: test_isotonic_regression_ties_min and _ties_max", () => {
    // test_isotonic.py line 142: x = [1, 1, 2, 3, 4, 5], y = [1..6] → [1.5, 1.5, 3, 4, 5, 6].
    expect(fitTransform([1, 1, 2, 3, 4, 5], [1, 2, 3, 4, 5, 6])).toEqual([1.5, 1.5, 3, 4, 5, 6]);
    // Line 155: x = [1, 2, 3, 4, 5, 5] → [1, 2, 3, 4, 5.5, 5.5].
    expect(fitTransform([1, 2, 3, 4, 5, 5], [1, 2, 3, 4, 5, 6])).toEqual([1, 2, 3, 4, 5.5, 5.5]);
  });

  it("handles ties as de Leeuw's secondary method: test_isotonic_regression_ties_secondary_", () => {
    // test_isotonic.py lines 182-196 (pituitary data from R `isotone`, gpava ties = "secondary").
    // By hand: tie means 22.5 (x=8), 23.33 (x=10), 20.83 (x=12), 24.25 (x=14), three points each but
    // two at 14; 23.33 > 20.83 pool to 22.083, then 22.5 > 22.083 pool all nine to 200/9 = 22.222.
    const x = [8, 8, 8, 10, 10, 10, 12, 12, 12, 14, 14];
    const y = [21, 23.5, 23, 24, 21, 25, 21.5, 22, 19, 23.5, 25];
    const expected = [22.22222, 22.22222, 22.22222, 22.22222, 22.22222, 22.22222, 22.22222, 22.22222, 22.22222, 24.25, 24.25];
    fitTransform(x, y).forEach((v, i) => expect(v).toBeCloseTo(expected[i], 4));
  });

  it("fits 0/1 labels with unequal tie groups: test_isotonic_regression_with_ties_in_differently_sized_groups", () => {
    // test_isotonic.py lines 220-222 (issue 9432, checked there against R `isotone`):
    // x = [0, 1, 1, 2, 3, 4], y = [0, 0, 1, 0, 0, 1] → [0, 0.25, 0.25, 0.25, 0.25, 1].
    // By hand: the tie at x = 1 averages to 0.5 with weight 2; 0.5 > 0 (x = 2) pools to 1/3 (weight 3);
    // 1/3 > 0 (x = 3) pools to 1/4 (weight 4); 0 < 1/4 < 1 holds.
    const map = fitIsotonicCalibration(points([0, 1, 1, 2, 3, 4], [0, 0, 1, 0, 0, 1]));
    expect(predictAll(map, [0, 1, 1, 2, 3, 4])).toEqual([0, 0.25, 0.25, 0.25, 0.25, 1]);
    // Knots kept by the interior-point rule: x = 0 (first), 1 and 3 (ends of the 0.25 run), 4 (last).
    expect(map).toEqual({ scores: [0, 1, 3, 4], probabilities: [0, 0.25, 0.25, 1] });
  });

  it("weights points: test_isotonic_sample_weight", () => {
    // test_isotonic.py lines 319-323: x = 1..7, y = [1, 41, 51, 1, 2, 5, 24], w = 1..7
    // → [1, 13.95 ×5, 24]. By hand: (41·2 + 51·3 + 1·4 + 2·5 + 5·6) / (2+3+4+5+6) = 279 / 20 = 13.95.
    const x = [1, 2, 3, 4, 5, 6, 7];
    expect(fitTransform(x, [1, 41, 51, 1, 2, 5, 24], [1, 2, 3, 4, 5, 6, 7])).toEqual([1, 13.95, 13.95, 13.95, 13.95, 13.95, 24]);
  });

  it("merges scores closer than 1e-15: test_isotonic_make_unique_tolerance", () => {
    // test_isotonic.py lines 565-572: X = [0, 1, 1 + 1e-16, 2], y = [0, 1, 2, 3]
    // → X_thresholds_ [0, 1, 2], y_thresholds_ [0, 1.5, 3], predict([0, .5, 1, 1.5, 2]) = [0, .75, 1.5, 2.25, 3].
    const map = fitIsotonicRegression([0, 1, 1 + 1e-16, 2], [0, 1, 2, 3]);
    expect(map).toEqual({ scores: [0, 1, 2], probabilities: [0, 1.5, 3] });
    expect(predictAll(map, [0, 0.5, 1, 1.5, 2])).toEqual([0, 0.75, 1.5, 2.25, 3]);
  });

  it("clips outside the fitted range: test_isotonic_regression_oob_clip", () => {
    // test_isotonic.py lines 346-357: predictions at min(x) - 10 and max(x) + 10 equal the extreme
    // in-range predictions.
    const x = [0, 1, 2, 3, 4, 5, 6];
    const map = fitIsotonicRegression(x, [3, 7, 5, 9, 8, 7, 10]);
    const inside = predictAll(map, x);
    expect(predictIsotonic(map, -10)).toBe(Math.min(...inside));
    expect(predictIsotonic(map, 16)).toBe(Math.max(...inside));
  });

  it("keeps predictions finite with a duplicated minimum: test_isotonic_duplicate_min_entry", () => {
    // test_isotonic.py lines 388-394: x = [0, 0, 1], y = [0, 0, 1], all predictions finite.
    const map = fitIsotonicCalibration(points([0, 0, 1], [0, 0, 1]));
    for (const p of predictAll(map, [0, 0, 1])) expect(Number.isFinite(p)).toBe(true);
  });

  it("returns knots that are a strictly increasing subset of the scores: test_isotonic_thresholds", () => {
    // Properties asserted in test_isotonic.py lines 586-609 (fewer thresholds than points, all of
    // them training X values, strictly increasing X, non-decreasing y within the range of y), here
    // on our own random 0/1 data.
    const random = seededRandom(42);
    const scores = Array.from({ length: 30 }, () => random());
    const labels = scores.map((s) => (random() < s ? 1 : 0)) as Array<0 | 1>;
    const map = fitIsotonicCalibration(points(scores, labels));
    expect(map.scores.length).toBeLessThan(scores.length);
    for (const s of map.scores) expect(scores).toContain(s);
    for (let i = 1; i < map.scores.length; i++) {
      expect(map.scores[i]).toBeGreaterThan(map.scores[i - 1]);
      expect(map.probabilities[i]).toBeGreaterThanOrEqual(map.probabilities[i - 1]);
    }
    for (const p of map.probabilities) {
      expect(p).toBeGreaterThanOrEqual(0);
      expect(p).toBeLessThanOrEqual(1);
    }
  });
});

describe("isotonic calibration: properties", () => {
  function randomLabelled(random: () => number, n: number, decimals: number): CalibrationPoint[] {
    const scale = 10 ** decimals;
    return Array.from({ length: n }, () => {
      const score = Math.round(random() * scale) / scale;
      return { score, label: random() < score * score ? 1 : 0 };
    });
  }

  it("does not depend on the order of the input: test_permutation_invariance", () => {
    // Idea from test_isotonic.py line 27 (fit is permutation invariant); here with weights and ties.
    const random = seededRandom(27);
    for (let round = 0; round < 20; round++) {
      const data = randomLabelled(random, 200, 2);
      const weights = data.map(() => [0, 1, 2, 20][Math.floor(random() * 4)]);
      const indices = shuffled(
        data.map((_, i) => i),
        random,
      );
      const a = fitIsotonicCalibration(data, weights);
      const b = fitIsotonicCalibration(
        indices.map((i) => data[i]),
        indices.map((i) => weights[i]),
      );
      expect(b).toEqual(a);
    }
  });

  it("treats an integer weight like that many copies of the point", () => {
    // Definition of weighted least squares: weight k contributes k identical squared errors.
    const random = seededRandom(99);
    for (let round = 0; round < 20; round++) {
      const data = randomLabelled(random, 80, 1);
      const weights = data.map(() => 1 + Math.floor(random() * 4));
      const copies = data.flatMap((p, i) => Array.from({ length: weights[i] }, () => p));
      expect(fitIsotonicCalibration(copies)).toEqual(fitIsotonicCalibration(data, weights));
    }
  });

  it("preserves the weighted share of positives (each block is fitted at its mean)", () => {
    // Property of the least-squares isotonic fit (each pooled block takes its weighted mean, so
    // Σ w·fitted = Σ w·y): from memory, standard result for PAV (Best & Chakravarti 1990).
    const random = seededRandom(1990);
    for (let round = 0; round < 20; round++) {
      const data = randomLabelled(random, 500, 3);
      const weights = data.map(() => 0.25 + random() * 4);
      const map = fitIsotonicCalibration(data, weights);
      let fitted = 0;
      let observed = 0;
      data.forEach((p, i) => {
        fitted += weights[i] * predictIsotonic(map, p.score);
        observed += weights[i] * p.label;
      });
      expect(Math.abs(fitted - observed)).toBeLessThan(1e-9 * data.length);
    }
  });

  it("is monotone between knots and flat outside them", () => {
    const random = seededRandom(5);
    const map = fitIsotonicCalibration(randomLabelled(random, 1000, 3));
    const queries = Array.from({ length: 2000 }, () => -0.5 + 2 * random()).sort((a, b) => a - b);
    const predictions = predictAll(map, queries);
    for (let i = 1; i < predictions.length; i++) expect(predictions[i]).toBeGreaterThanOrEqual(predictions[i - 1]);
    expect(predictIsotonic(map, -1e9)).toBe(map.probabilities[0]);
    expect(predictIsotonic(map, 1e9)).toBe(map.probabilities[map.probabilities.length - 1]);
  });

  it("interpolates linearly between two knots", () => {
    // Hand-worked: halfway between (0.2, 0.1) and (0.6, 0.5) is (0.4, 0.3); a quarter of the way is
    // (0.3, 0.2).
    const map: IsotonicCalibrationMap = { scores: [0.2, 0.6], probabilities: [0.1, 0.5] };
    expect(predictIsotonic(map, 0.4)).toBeCloseTo(0.3, 15);
    expect(predictIsotonic(map, 0.3)).toBeCloseTo(0.2, 15);
    expect(predictIsotonic(map, 0.2)).toBe(0.1);
    expect(predictIsotonic(map, 0.6)).toBe(0.5);
  });
});

describe("isotonic calibration: impossible input", () => {
  it("rejects empty data, non-finite scores, labels other than 0/1 and bad weights", () => {
    expect(() => fitIsotonicCalibration([])).toThrow(RangeError);
    expect(() => fitIsotonicCalibration([{ score: Number.NaN, label: 1 }])).toThrow(/points\[0\]\.score/);
    expect(() => fitIsotonicCalibration([{ score: 0.1, label: 0 }, { score: Infinity, label: 1 }])).toThrow(/points\[1\]\.score/);
    expect(() => fitIsotonicCalibration([{ score: 0.1, label: 2 as 0 | 1 }])).toThrow(/label must be 0 or 1/);
    expect(() => fitIsotonicCalibration([{ score: 0.1, label: 1 }], [-1])).toThrow(/weights\[0\]/);
    expect(() => fitIsotonicCalibration([{ score: 0.1, label: 1 }], [Number.NaN])).toThrow(/weights\[0\]/);
    expect(() => fitIsotonicCalibration([{ score: 0.1, label: 1 }], [1, 1])).toThrow(/one entry per point/);
    expect(() => fitIsotonicCalibration([{ score: 0.1, label: 1 }], [0])).toThrow(/positive weight/);
    expect(() => fitIsotonicRegression([1, 2], [1])).toThrow(/same length/);
  });

  it("rejects malformed maps and non-finite scores at prediction", () => {
    expect(() => predictIsotonic({ scores: [], probabilities: [] }, 0.5)).toThrow(RangeError);
    expect(() => predictIsotonic({ scores: [0, 1], probabilities: [0] }, 0.5)).toThrow(RangeError);
    expect(() => predictIsotonic({ scores: [0, 1], probabilities: [0, 1] }, Number.NaN)).toThrow(/score/);
    expect(() => assertIsotonicCalibrationMap({ scores: [0, 0], probabilities: [0, 1] })).toThrow(/strictly increasing/);
    expect(() => assertIsotonicCalibrationMap({ scores: [0, 1], probabilities: [0.5, 0.4] })).toThrow(/non-decreasing/);
    expect(() => assertIsotonicCalibrationMap({ scores: [0, 1], probabilities: [0, 1.5] })).toThrow(/probability/);
    const good = { scores: [0, 1], probabilities: [0.1, 0.9] };
    expect(assertIsotonicCalibrationMap(good)).toBe(good);
  });
});
