import { describe, expect, it } from "vitest";
import { cohenKappa } from "@/lib/metrics";

/** Pairs from a 2×2 or k×k table of counts: table[i][j] = how often first said i and second j. */
function pairsFromTable(categories: string[], table: number[][]): [string, string][] {
  const pairs: [string, string][] = [];
  table.forEach((row, i) =>
    row.forEach((count, j) => {
      for (let c = 0; c < count; c++) pairs.push([categories[i], categories[j]]);
    }),
  );
  return pairs;
}

/** Pairs from two label vectors, as scikit-learn's tests build them. */
function pairsFromVectors(first: number[], second: number[]): [string, string][] {
  return first.map((a, i) => [String(a), String(second[i])]);
}

const repeat = (value: number, times: number): number[] => new Array<number>(times).fill(value);

describe("Cohen's kappa between first and second review", () => {
  it("matches the textbook two-reviewer example", () => {
    // From memory of the worked example in the Wikipedia article "Cohen's kappa": 50 items,
    // both yes 20, A yes/B no 5, A no/B yes 10, both no 15. Hand-worked: p_o = 35/50 = 0.7;
    // p_e = (25/50)(30/50) + (25/50)(20/50) = 0.3 + 0.2 = 0.5; kappa = (0.7 − 0.5)/(1 − 0.5) = 0.4.
    const pairs = pairsFromTable(["yes", "no"], [
      [20, 5],
      [10, 15],
    ]);
    expect(cohenKappa(pairs)).toBeCloseTo(0.4, 12);
  });

  it("matches scikit-learn's test_cohen_kappa examples (Artstein and Poesio 2008)", () => {
    // sklearn/metrics/tests/test_classification.py, test_cohen_kappa (scikit-learn 1.2.1).
    // Lines 706–709: Artstein and Poesio (2008) Table 1, kappa ≈ 0.348 (3 decimals).
    // Hand-worked: p_o = 0.7, p_e = 0.4·0.3 + 0.6·0.7 = 0.54, kappa = 0.16/0.46 = 0.347826…
    let y1 = [...repeat(0, 40), ...repeat(1, 60)];
    let y2 = [...repeat(0, 20), ...repeat(1, 20), ...repeat(0, 10), ...repeat(1, 50)];
    const kappa = cohenKappa(pairsFromVectors(y1, y2));
    expect(kappa).toBeCloseTo(0.348, 3);
    expect(kappa).toBeCloseTo(0.16 / 0.46, 12);
    // Line 710: symmetric in the two reviewers.
    expect(cohenKappa(pairsFromVectors(y2, y1))).toBe(kappa);
    // Line 717: a reviewer agrees perfectly with themself.
    expect(cohenKappa(pairsFromVectors(y1, y1))).toBeCloseTo(1, 12);

    // Lines 720–722: Artstein and Poesio Table 4, three categories, kappa ≈ 0.8013.
    y1 = [...repeat(0, 46), ...repeat(1, 44), ...repeat(2, 10)];
    y2 = [...repeat(0, 52), ...repeat(1, 32), ...repeat(2, 16)];
    expect(cohenKappa(pairsFromVectors(y1, y2))).toBeCloseTo(0.8013, 4);

    // Lines 725–727: unweighted kappa ≈ 0.9315 (weighted variants at 728–731 are not offered:
    // our outcomes are not ordered).
    y1 = [...repeat(0, 46), ...repeat(1, 44), ...repeat(2, 10)];
    y2 = [...repeat(0, 50), ...repeat(1, 40), ...repeat(2, 10)];
    expect(cohenKappa(pairsFromVectors(y1, y2))).toBeCloseTo(0.9315, 4);
  });

  it("ignores categories nobody used but rejects outcomes outside the given set", () => {
    // scikit-learn test_cohen_kappa lines 712–715 drop labels outside `labels=`; we throw instead
    // (see cohen-kappa.ts), and an unused category leaves kappa unchanged.
    const pairs = pairsFromTable(["confirmed_fraud", "legitimate"], [
      [20, 5],
      [10, 15],
    ]);
    expect(cohenKappa(pairs, ["confirmed_fraud", "legitimate", "inconclusive"])).toBeCloseTo(0.4, 12);
    expect(() => cohenKappa([...pairs, ["confirmed_fraud", "unknown"]], ["confirmed_fraud", "legitimate"])).toThrow(
      /outside/,
    );
    expect(() => cohenKappa(pairs, ["legitimate", "legitimate"])).toThrow(/duplicates/);
  });

  it("is zero when reviewers agree exactly as often as chance predicts", () => {
    // Hand-worked: independent 2×2 table [[25, 25], [25, 25]]: p_o = 0.5 = p_e → kappa 0.
    expect(cohenKappa(pairsFromTable(["a", "b"], [[25, 25], [25, 25]]))).toBe(0);
  });

  it("is undefined with no pairs or when both reviewers only ever used one outcome", () => {
    expect(cohenKappa([])).toBeNull();
    expect(cohenKappa([["legitimate", "legitimate"], ["legitimate", "legitimate"]])).toBeNull();
  });
});
