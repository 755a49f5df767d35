import { describe, expect, it } from "vitest";
import { precisionAtK, type AlertOfDay } from "@/lib/metrics";

const alert = (priority: number, isFraud: boolean): AlertOfDay => ({ priority, isFraud });

describe("precision at k for one day", () => {
  it("is the share of fraud among the k highest-priority alerts", () => {
    // Alert precision P_k = |true positives among the top k| / k: Dal Pozzolo et al. 2018, IEEE
    // TNNLS, "Credit Card Fraud Detection: A Realistic Modeling and a Novel Learning Strategy"
    // (from memory). Same as P@k(d) = |A_d^Fraud| / k in Le Borgne et al., "Reproducible Machine
    // Learning for Credit Card Fraud Detection – Practical Handbook",
    // Chapter_4_PerformanceMetrics/TopKBased.ipynb, function precision_top_k_day (read in the
    // Fraud-Detection-Handbook/fraud-detection-handbook repository, commit eabce290).
    // Hand-worked: priorities sorted 0.95(F) 0.90(L) 0.80(F) 0.70(F) | 0.60(L) 0.40(F) 0.10(L);
    // top 4 hold 3 fraud → 3/4.
    const day = [
      alert(0.4, true),
      alert(0.9, false),
      alert(0.1, false),
      alert(0.95, true),
      alert(0.6, false),
      alert(0.8, true),
      alert(0.7, true),
    ];
    expect(precisionAtK(day, 4)).toEqual({ value: 0.75, k: 4, considered: 4 });
    // Top 2: 0.95(F), 0.90(L) → 1/2.
    expect(precisionAtK(day, 2)).toEqual({ value: 0.5, k: 2, considered: 2 });
  });

  it("divides by the alerts available when the day had fewer than k, and says so", () => {
    // Hand-worked: 3 alerts, 2 fraud, k = 5 → 2/3 with considered = 3. (The handbook's
    // precision_top_k_day divides by k, which would give 2/5; we do not, see precision-at-k.ts.)
    const day = [alert(3, true), alert(2, false), alert(1, true)];
    expect(precisionAtK(day, 5)).toEqual({ value: 2 / 3, k: 5, considered: 3 });
  });

  it("breaks ties in priority by input order", () => {
    // Three alerts tie at the top; with k = 2 the first two passed in are taken.
    const fraudFirst = [alert(5, true), alert(5, false), alert(5, false)];
    const fraudLast = [alert(5, false), alert(5, false), alert(5, true)];
    expect(precisionAtK(fraudFirst, 2).value).toBe(0.5);
    expect(precisionAtK(fraudLast, 2).value).toBe(0);
  });

  it("has no value for a day without alerts", () => {
    expect(precisionAtK([], 10)).toEqual({ value: null, k: 10, considered: 0 });
  });

  it("does not reorder the caller's array", () => {
    const day = [alert(1, false), alert(2, true)];
    precisionAtK(day, 1);
    expect(day.map((a) => a.priority)).toEqual([1, 2]);
  });

  it("rejects a k that is not a positive integer and a priority that is not a number", () => {
    expect(() => precisionAtK([alert(1, true)], 0)).toThrow(/k must be a positive integer/);
    expect(() => precisionAtK([alert(1, true)], 2.5)).toThrow(RangeError);
    expect(() => precisionAtK([alert(Number.NaN, true)], 1)).toThrow(/priority/);
  });
});
