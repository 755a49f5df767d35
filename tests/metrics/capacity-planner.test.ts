// The capacity planner on synthetic traffic whose answers are worked out in closed form below.
// Scores are uniform and the calibrated probability equals the score (p = s), so every quantity is
// an integral of a linear function. The cells sit at the midpoints of a fine grid; the midpoint rule
// integrates a linear function exactly, so where a cut falls on a cell boundary the planner must
// match the closed form to floating-point precision, and elsewhere to within half a cell.
import { describe, expect, it } from "vitest";
import { capacityCurve, capacityGrid, planCapacity, thresholdForCapacity, workAtCapacity, type ScoreCell } from "@/lib/metrics/capacity-planner";
import { seededRandom } from "@/tests/risk/seeded-random";

/** `cells` cells evenly covering [from, to), `perDay` transactions a day in all, p = score. */
function uniformCells({ from, to, cells, perDay, exposureMinor, alerted = true }: { from: number; to: number; cells: number; perDay: number; exposureMinor: number; alerted?: boolean }): ScoreCell[] {
  const width = (to - from) / cells;
  return Array.from({ length: cells }, (_, j) => {
    const score = from + (j + 0.5) * width;
    return { score, perDay: perDay / cells, probability: score, exposureMinor, alerted };
  });
}

describe("the alert threshold that yields K alerts a day", () => {
  // N = 1,000 transactions a day, scores uniform on [0, 1), p = s, exposure 100.00 (10,000 minor).
  // Closed form for K of N a day: threshold t = 1 − K/N; precision = mean of s over [t, 1] = (1 + t)/2;
  // expected loss caught a day = K · precision · E.
  // K = 200: t = 0.8, precision = 0.9, EL caught = 200 · 0.9 · 10,000 = 1,800,000 minor a day.
  const cells = uniformCells({ from: 0, to: 1, cells: 1_000, perDay: 1_000, exposureMinor: 10_000 });

  it("is 1 − K/N, with the mean probability of the top band as precision", () => {
    const plan = thresholdForCapacity(cells, 200);
    // The threshold is the cut cell's score: the midpoint of [0.800, 0.801), half a cell above t.
    expect(Math.abs((plan.threshold ?? 0) - 0.8)).toBeLessThanOrEqual(0.0005 + 1e-12);
    expect(plan.alertsPerDayAtThreshold).toBeCloseTo(200, 9);
    expect(plan.reviewedPerDay).toBe(200);
    expect(plan.precision).toBeCloseTo(0.9, 12);
    expect(plan.expectedFraudsPerDay).toBeCloseTo(180, 9);
    expect(plan.expectedLossCaughtPerDayMinor).toBeCloseTo(1_800_000, 4);
    expect(plan.reachesBelowCurrentAlerts).toBe(false);
  });

  it("follows the closed form for every K, within half a cell where the cut falls inside a cell", () => {
    for (const k of [1, 37.5, 100, 333.3, 500, 750, 999]) {
      const t = 1 - k / 1_000;
      const plan = thresholdForCapacity(cells, k);
      expect(Math.abs((plan.threshold ?? 0) - t)).toBeLessThanOrEqual(0.001);
      // Precision: (1 + t)/2. A cut inside a cell takes part of it at the cell's midpoint, an error of
      // at most (cell width)² · (cells per day) / K = 1e-6 · 1 / K here.
      expect(plan.precision ?? 0).toBeCloseTo((1 + t) / 2, 5);
      expect(plan.expectedLossCaughtPerDayMinor).toBeCloseTo(k * ((1 + t) / 2) * 10_000, -1);
    }
  });

  it("sees below the current threshold through below-the-line samples weighted 1/π", () => {
    // Alerts: scores uniform on [0.5, 1), 500 a day. Below the threshold 0.5, samples are drawn with
    // inclusion probability π = 0.1: 50 a day uniform on [0, 0.5), each standing for 1/π = 10, so the
    // cells stand for 500 a day there. K = 750 a day: t = 1 − 750/1,000 = 0.25, precision = (1 + 0.25)/2
    // = 0.625, EL caught = 750 · 0.625 · 10,000 = 4,687,500 minor a day.
    const alerts = uniformCells({ from: 0.5, to: 1, cells: 500, perDay: 500, exposureMinor: 10_000 });
    const samplesPerDay = 50;
    const inclusionProbability = 0.1;
    const below = uniformCells({ from: 0, to: 0.5, cells: 500, perDay: samplesPerDay / inclusionProbability, exposureMinor: 10_000, alerted: false });
    const plan = thresholdForCapacity([...alerts, ...below], 750);
    expect(Math.abs((plan.threshold ?? 0) - 0.25)).toBeLessThanOrEqual(0.0005 + 1e-12);
    expect(plan.precision).toBeCloseTo(0.625, 12);
    expect(plan.expectedLossCaughtPerDayMinor).toBeCloseTo(4_687_500, 3);
    expect(plan.reachesBelowCurrentAlerts).toBe(true);

    // Today's queue holds only the 500 alerts a day: at K = 750 every one is reviewed, whatever the order.
    // EL caught = 500 · mean s over [0.5, 1) · E = 500 · 0.75 · 10,000 = 3,750,000.
    const queue = planCapacity({ cells: [...alerts, ...below], capacityPerDay: 750 });
    expect(queue.queuePerDay).toBeCloseTo(500, 9);
    expect(queue.trafficPerDay).toBeCloseTo(1_000, 9);
    expect(queue.queueByScore.capacityExceedsPool).toBe(true);
    expect(queue.queueByScore.reviewedPerDay).toBeCloseTo(500, 9);
    expect(queue.queueByScore.expectedLossCaughtPerDayMinor).toBeCloseTo(3_750_000, 3);
    expect(queue.orderingGainPerDayMinor).toBeCloseTo(0, 3);
  });

  it("has no threshold at zero capacity and takes all traffic when K exceeds it", () => {
    expect(thresholdForCapacity(cells, 0)).toMatchObject({ threshold: null, precision: null, reviewedPerDay: 0, expectedLossCaughtPerDayMinor: 0 });
    const all = thresholdForCapacity(cells, 5_000);
    expect(all.capacityExceedsPool).toBe(true);
    expect(all.reviewedPerDay).toBeCloseTo(1_000, 9);
    // Everything: precision = mean of s over [0, 1) = 0.5.
    expect(all.precision).toBeCloseTo(0.5, 12);
    expect(all.threshold).toBeCloseTo(0.0005, 12);
    expect(thresholdForCapacity([], 10)).toMatchObject({ threshold: null, reviewedPerDay: 0, capacityExceedsPool: true });
  });
});

describe("working the queue by expected loss instead of by score", () => {
  // N = 1,000 alerts a day, scores uniform on [0, 1), p = s. Half the alerts (500 a day) have exposure
  // E₁ = 10,000, the other half E₂ = 100,000, independently of the score. K = 250 a day.
  //
  // By score: the top 250 scores are s ≥ 0.75, 125 of each half. Mean s = 0.875, so
  //   EL caught = 125 · 0.875 · 10,000 + 125 · 0.875 · 100,000 = 1,093,750 + 10,937,500 = 12,031,250.
  //   Precision = 0.875.
  // By expected loss (s·E): find the cut c with 250 alerts above it. Small-exposure alerts have
  //   s·E₁ < 10,000; if c ≥ 10,000 none of them is taken and 500 · (1 − c/100,000) = 250 gives
  //   c = 50,000 (consistent). So the large-exposure alerts with s ≥ 0.5 are worked: 250 a day with
  //   mean s = 0.75: EL caught = 250 · 0.75 · 100,000 = 18,750,000; precision = 0.75.
  // Gain of ordering by money at stake: 18,750,000 − 12,031,250 = 6,718,750 a day, with fewer frauds.
  const cells = [
    ...uniformCells({ from: 0, to: 1, cells: 1_000, perDay: 500, exposureMinor: 10_000 }),
    ...uniformCells({ from: 0, to: 1, cells: 1_000, perDay: 500, exposureMinor: 100_000 }),
  ];

  it("catches more expected loss, with a lower precision, worked out in closed form", () => {
    const plan = planCapacity({ cells, capacityPerDay: 250 });
    expect(plan.queueByScore.expectedLossCaughtPerDayMinor).toBeCloseTo(12_031_250, 3);
    expect(plan.queueByScore.precision).toBeCloseTo(0.875, 12);
    expect(plan.queueByExpectedLoss.expectedLossCaughtPerDayMinor).toBeCloseTo(18_750_000, 3);
    expect(plan.queueByExpectedLoss.precision).toBeCloseTo(0.75, 12);
    expect(plan.orderingGainPerDayMinor).toBeCloseTo(6_718_750, 3);
    // The lowest score reached by expected loss is the cut cell's, s ≈ 0.5 (midpoint 0.5005).
    expect(plan.queueByExpectedLoss.lowestScoreReached).toBeCloseTo(0.5005, 12);
    // All cells are alerted, so the threshold rule is the queue worked by score.
    expect(plan.threshold.expectedLossCaughtPerDayMinor).toBeCloseTo(plan.queueByScore.expectedLossCaughtPerDayMinor, 6);
    // All alerts' expected loss a day: 500 · 0.5 · (10,000 + 100,000) = 27,500,000.
    expect(plan.queueExpectedLossPerDayMinor).toBeCloseTo(27_500_000, 3);
  });

  it("makes no difference when every alert has the same exposure (then score order is expected-loss order)", () => {
    const same = uniformCells({ from: 0, to: 1, cells: 1_000, perDay: 1_000, exposureMinor: 10_000 });
    for (const k of [50, 250, 600]) {
      const byScore = workAtCapacity(same, k, "score");
      const byLoss = workAtCapacity(same, k, "expected_loss");
      expect(byLoss.expectedLossCaughtPerDayMinor).toBeCloseTo(byScore.expectedLossCaughtPerDayMinor, 6);
    }
  });

  it("draws the curve from zero to twice the larger of K and the queue, through K and the queue size", () => {
    const plan = planCapacity({ cells, capacityPerDay: 250 });
    const capacities = plan.curve.map((point) => point.capacityPerDay);
    expect(capacities[0]).toBe(0);
    expect(capacities.at(-1)).toBeCloseTo(1_000, 9); // min(traffic 1,000, 2 · max(250, 1,000))
    expect(capacities).toContain(250);
    const atK = plan.curve.find((point) => point.capacityPerDay === 250);
    expect(atK?.queueByExpectedLossMinor).toBeCloseTo(18_750_000, 3);
    expect(atK?.queueByScoreMinor).toBeCloseTo(12_031_250, 3);
    // At full capacity both orders catch everything: 27,500,000.
    expect(plan.curve.at(-1)?.queueByScoreMinor).toBeCloseTo(27_500_000, 3);
    expect(plan.curve.at(-1)?.queueByExpectedLossMinor).toBeCloseTo(27_500_000, 3);
  });
});

describe("properties on random traffic", () => {
  const random = seededRandom(90_210);
  const randomCells = (): ScoreCell[] =>
    Array.from({ length: 300 }, () => {
      const score = random();
      return {
        score,
        perDay: random() * 5,
        probability: Math.min(1, score * random() * 1.5),
        exposureMinor: Math.round(100 + 1e6 * random() ** 4),
        alerted: score > 0.3,
      };
    });

  it("expected-loss order never catches less than score order, and both only grow with capacity", () => {
    for (let trial = 0; trial < 20; trial++) {
      const cells = randomCells();
      const curve = capacityCurve(cells, capacityGrid(800, 81));
      curve.forEach((point, i) => {
        expect(point.queueByExpectedLossMinor).toBeGreaterThanOrEqual(point.queueByScoreMinor - 1e-6);
        if (i > 0) {
          expect(point.queueByScoreMinor).toBeGreaterThanOrEqual(curve[i - 1].queueByScoreMinor - 1e-6);
          expect(point.thresholdForCapacityMinor).toBeGreaterThanOrEqual(curve[i - 1].thresholdForCapacityMinor - 1e-6);
        }
      });
    }
  });

  it("has diminishing returns in expected-loss order: each extra review is worth no more than the one before", () => {
    const cells = randomCells();
    const curve = capacityCurve(cells, capacityGrid(600, 61));
    for (let i = 2; i < curve.length; i++) {
      const gain = curve[i].queueByExpectedLossMinor - curve[i - 1].queueByExpectedLossMinor;
      const previous = curve[i - 1].queueByExpectedLossMinor - curve[i - 2].queueByExpectedLossMinor;
      expect(gain).toBeLessThanOrEqual(previous + 1e-6);
    }
  });

  it("gives the same answer whatever order the cells come in", () => {
    const cells = randomCells();
    const reversed = [...cells].reverse();
    expect(planCapacity({ cells: reversed, capacityPerDay: 123 }).queueByExpectedLoss.expectedLossCaughtPerDayMinor).toBeCloseTo(
      planCapacity({ cells, capacityPerDay: 123 }).queueByExpectedLoss.expectedLossCaughtPerDayMinor,
      6,
    );
  });
});

describe("input checks", () => {
  const cell: ScoreCell = { score: 0.5, perDay: 1, probability: 0.5, exposureMinor: 100, alerted: true };
  it("rejects probabilities outside [0, 1], negative counts or exposures, and a negative capacity", () => {
    expect(() => planCapacity({ cells: [{ ...cell, probability: 1.2 }], capacityPerDay: 1 })).toThrow(/cells\[0\]\.probability/);
    expect(() => planCapacity({ cells: [{ ...cell, perDay: -1 }], capacityPerDay: 1 })).toThrow(/cells\[0\]\.perDay/);
    expect(() => planCapacity({ cells: [{ ...cell, exposureMinor: Number.NaN }], capacityPerDay: 1 })).toThrow(/exposureMinor/);
    expect(() => planCapacity({ cells: [{ ...cell, score: Infinity }], capacityPerDay: 1 })).toThrow(/score/);
    expect(() => planCapacity({ cells: [cell], capacityPerDay: -3 })).toThrow(/capacityPerDay/);
    expect(() => capacityGrid(10, 1)).toThrow(/points/);
  });
});
