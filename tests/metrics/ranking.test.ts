import { describe, expect, it } from "vitest";
import { averagePrecision, rocAuc } from "@/lib/metrics";

describe("ROC AUC", () => {
  it("matches scikit-learn's test_roc_curve_toydata examples", () => {
    // sklearn/metrics/tests/test_ranking.py, test_roc_curve_toydata (scikit-learn 1.2.1).
    expect(rocAuc([0, 1], [0, 1])).toBe(1); // lines 314–320
    expect(rocAuc([1, 0], [0, 1])).toBe(0); // lines 322–328
    expect(rocAuc([1, 1], [1, 0])).toBe(0.5); // lines 330–336: a tie counts half
    expect(rocAuc([1, 0], [1, 0])).toBe(1); // lines 338–344
    expect(rocAuc([0.5, 0.5], [1, 0])).toBe(0.5); // lines 346–352
    // Lines 354–359: one class only raises ValueError in scikit-learn; we return null.
    expect(rocAuc([0.25, 0.75], [0, 0])).toBeNull();
    expect(rocAuc([0.25, 0.75], [1, 1])).toBeNull();
  });

  it("counts a fraud above a legitimate alert as a win and a tie as half", () => {
    // Hand-worked on scikit-learn's average_precision_score docstring data
    // (sklearn/metrics/_ranking.py lines 197–201): fraud scores 0.8, 0.35; legitimate 0.1, 0.4.
    // Pairs: 0.8>0.1 ✓, 0.8>0.4 ✓, 0.35>0.1 ✓, 0.35<0.4 ✗ → 3/4.
    expect(rocAuc([0.1, 0.4, 0.35, 0.8], [0, 0, 1, 1])).toBe(0.75);
    // Hand-worked with a tie: fraud 0.5, 0.9; legitimate 0.5, 0.2.
    // 0.5 vs 0.5 half, 0.5>0.2 ✓, 0.9>0.5 ✓, 0.9>0.2 ✓ → 3.5/4.
    expect(rocAuc([0.5, 0.9, 0.5, 0.2], [1, 1, 0, 0])).toBe(0.875);
  });

  it("does not depend on input order", () => {
    const scores = [0.3, 0.3, 0.7, 0.1, 0.7, 0.3, 0.9];
    const labels = [1, 0, 0, 0, 1, 1, 0];
    const reversed = rocAuc([...scores].reverse(), [...labels].reverse());
    expect(rocAuc(scores, labels)).toBe(reversed);
  });

  it("agrees with the count over all pairs on many random tied inputs", () => {
    // Second computation: the O(P·N) definition, as in scikit-learn's _auc helper
    // (sklearn/metrics/tests/test_ranking.py lines 100–112), with ties counted half.
    let seed = 12345;
    const random = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    for (let trial = 0; trial < 50; trial++) {
      const n = 2 + Math.floor(random() * 40);
      const scores = Array.from({ length: n }, () => Math.floor(random() * 6) / 5);
      const labels = Array.from({ length: n }, () => (random() < 0.4 ? 1 : 0));
      labels[0] = 1;
      labels[1] = 0;
      let wins = 0;
      let pairs = 0;
      for (let i = 0; i < n; i++) {
        for (let j = 0; j < n; j++) {
          if (labels[i] !== 1 || labels[j] !== 0) continue;
          pairs += 1;
          wins += scores[i] > scores[j] ? 1 : scores[i] === scores[j] ? 0.5 : 0;
        }
      }
      expect(rocAuc(scores, labels)).toBeCloseTo(wins / pairs, 12);
    }
  });

  it("rejects mismatched lengths, scores that are not numbers and labels other than 0/1", () => {
    expect(() => rocAuc([0.1], [1, 0])).toThrow(/same length/);
    expect(() => rocAuc([Number.NaN, 0.2], [1, 0])).toThrow(/scores\[0\]/);
    expect(() => rocAuc([0.1, 0.2], [1, 2])).toThrow(/labels\[1\] must be 0 or 1/);
  });
});

describe("average precision", () => {
  it("matches scikit-learn's docstring example", () => {
    // sklearn/metrics/_ranking.py lines 197–201: 0.83… Hand-worked: sorted 0.8(F) 0.4(L) 0.35(F)
    // 0.1(L); recall steps of 1/2 at precision 1/1 and 2/3 → 0.5·1 + 0.5·(2/3) = 5/6.
    expect(averagePrecision([0.1, 0.4, 0.35, 0.8], [0, 0, 1, 1])).toBeCloseTo(5 / 6, 12);
  });

  it("matches scikit-learn's test_precision_recall_curve_toydata examples", () => {
    // sklearn/metrics/tests/test_ranking.py, test_precision_recall_curve_toydata.
    expect(averagePrecision([0, 1], [0, 1])).toBe(1); // lines 943–949
    expect(averagePrecision([1, 0], [0, 1])).toBe(0.5); // lines 951–960
    expect(averagePrecision([1, 1], [1, 0])).toBe(0.5); // lines 962–968: tied scores enter together
    expect(averagePrecision([1, 0], [1, 0])).toBe(1); // lines 970–976
    expect(averagePrecision([0.5, 0.5], [1, 0])).toBe(0.5); // lines 978–984
    // Lines 986–999: one class only gives 0 (no fraud) or 1 (all fraud) in scikit-learn, with a
    // warning for the first; we return null for both.
    expect(averagePrecision([0.25, 0.75], [0, 0])).toBeNull();
    expect(averagePrecision([0.25, 0.75], [1, 1])).toBeNull();
  });

  it("equals the fraud share for a constant score", () => {
    // sklearn/metrics/tests/test_ranking.py lines 1103–1114, test_average_precision_constant_values:
    // every 4th of 100 alerts is fraud, one constant score → exactly 0.25.
    const labels = Array.from({ length: 100 }, (_, i) => (i % 4 === 0 ? 1 : 0));
    expect(averagePrecision(new Array<number>(100).fill(1), labels)).toBe(0.25);
  });

  it("does not depend on where the fraud sits inside a group of tied scores", () => {
    // The pitfall noted in test_ranking.py lines 118–122 (_average_precision): with scores
    // [0.5, 0.5, 0.5] a naive ranking gives 1/3 for labels [1, 0, 0] but 1 for [0, 0, 1].
    // Grouping ties by threshold gives 1/3 for both (one threshold, precision 1/3, recall 0 → 1).
    expect(averagePrecision([0.5, 0.5, 0.5], [1, 0, 0])).toBeCloseTo(1 / 3, 12);
    expect(averagePrecision([0.5, 0.5, 0.5], [0, 0, 1])).toBeCloseTo(1 / 3, 12);
  });
});
