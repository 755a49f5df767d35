import { describe, expect, it } from "vitest";
import {
  compareQueueOrder,
  computeExpectedLoss,
  computeExposure,
  dueAt,
  fraudProbability,
  priorityValue,
  type FraudProbabilityInput,
  type QueueOrderEntry,
  type QueueOrderMode,
  type SlaBand,
} from "@/lib/risk";
import { seededRandom, shuffled } from "./seeded-random";

// A hand-worked queue (DESIGN.md §4, Queue order). All numbers below are worked by hand from the
// formulas; the test recomputes them through lib/risk and then checks the order.
//
// Settings (invented for the test):
//   recovery rate r by channel: card_not_present 0.05, card_present 0.20, wallet 0.30, bank_transfer 0.60
//   fixed cost of a confirmed fraud f = 1500 minor units
//   SLA bands: EL ≥ 0 → 48 h, EL ≥ 10 000 → 8 h, EL ≥ 15 000 → 2 h
// Model versions:
//   "classifier-a": probability scores, trained with β = 0.25 → p = 0.25s / (0.25s − s + 1)
//   "classifier-b": probability scores, no undersampling (β = 1) → p = s
//   "detector":     anomaly scores, prior hit rate 0.03 → p = 0.03
//
// alert  amount   channel           model         score  p                                   E = amount·(1−r) + f           EL = p·E   min  EL/min
// A1     250 000  bank_transfer     classifier-b  0.10   0.10                                250 000·0.40 + 1500 = 101 500   10 150    20   507.5
// A2      40 000  card_not_present  classifier-a  0.80   0.2/(0.2 − 0.8 + 1) = 0.2/0.4 = 0.5  40 000·0.95 + 1500 =  39 500   19 750     5   3 950
// A3     120 000  card_present      classifier-b  0.08   0.08                                120 000·0.80 + 1500 =  97 500    7 800    12   650
// A4     900 000  bank_transfer     detector      8.20   0.03 (prior)                        900 000·0.40 + 1500 = 361 500   10 845    45   241
// A5      15 000  card_not_present  classifier-b  0.90   0.90                                 15 000·0.95 + 1500 =  15 750   14 175     3   4 725
// A6      60 000  wallet            classifier-a  0.50   0.125/(0.125 − 0.5 + 1) = 0.2         60 000·0.70 + 1500 =  43 500    8 700    10   870
// A7      as A6, same arrival: only the id separates them
// A8      as A6, arrived an hour earlier
//
// Arrivals on 2024-05-06 (UTC) and due times (arrival + band hours):
//   A1 03:00 + 8 h  = 11:00     A2 09:30 + 2 h = 11:30     A3 01:00 + 48 h = 05-08 01:00
//   A4 05:00 + 8 h  = 13:00     A5 08:00 + 8 h = 16:00     A6, A7 07:00 + 48 h = 05-08 07:00
//   A8 06:00 + 48 h = 05-08 06:00

const recoveryRate = { card_not_present: 0.05, card_present: 0.2, wallet: 0.3, bank_transfer: 0.6 } as const;
const fixedCostMinor = 1_500;
const bands: SlaBand[] = [
  { minExpectedLossMinor: 0, slaHours: 48 },
  { minExpectedLossMinor: 10_000, slaHours: 8 },
  { minExpectedLossMinor: 15_000, slaHours: 2 },
];
const models: Record<string, Omit<FraudProbabilityInput, "score">> = {
  "classifier-a": { scoreKind: "probability", negativeSamplingRate: 0.25, priorHitRate: null, calibrationMap: null },
  "classifier-b": { scoreKind: "probability", negativeSamplingRate: 1, priorHitRate: null, calibrationMap: null },
  detector: { scoreKind: "anomaly", negativeSamplingRate: 1, priorHitRate: 0.03, calibrationMap: null },
};

interface AlertInput {
  id: string;
  amountMinor: number;
  channel: keyof typeof recoveryRate;
  model: keyof typeof models;
  score: number;
  handlingMinutes: number;
  arrivedAt: string;
}

const alerts: AlertInput[] = [
  { id: "alert-01", amountMinor: 250_000, channel: "bank_transfer", model: "classifier-b", score: 0.1, handlingMinutes: 20, arrivedAt: "2024-05-06T03:00:00Z" },
  { id: "alert-02", amountMinor: 40_000, channel: "card_not_present", model: "classifier-a", score: 0.8, handlingMinutes: 5, arrivedAt: "2024-05-06T09:30:00Z" },
  { id: "alert-03", amountMinor: 120_000, channel: "card_present", model: "classifier-b", score: 0.08, handlingMinutes: 12, arrivedAt: "2024-05-06T01:00:00Z" },
  { id: "alert-04", amountMinor: 900_000, channel: "bank_transfer", model: "detector", score: 8.2, handlingMinutes: 45, arrivedAt: "2024-05-06T05:00:00Z" },
  { id: "alert-05", amountMinor: 15_000, channel: "card_not_present", model: "classifier-b", score: 0.9, handlingMinutes: 3, arrivedAt: "2024-05-06T08:00:00Z" },
  { id: "alert-06", amountMinor: 60_000, channel: "wallet", model: "classifier-a", score: 0.5, handlingMinutes: 10, arrivedAt: "2024-05-06T07:00:00Z" },
  { id: "alert-07", amountMinor: 60_000, channel: "wallet", model: "classifier-a", score: 0.5, handlingMinutes: 10, arrivedAt: "2024-05-06T07:00:00Z" },
  { id: "alert-08", amountMinor: 60_000, channel: "wallet", model: "classifier-a", score: 0.5, handlingMinutes: 10, arrivedAt: "2024-05-06T06:00:00Z" },
];

// Hand-worked values from the table above, by id suffix.
const handWorked: Record<string, { p: number; exposure: number; el: number; perMinute: number; due: string }> = {
  "01": { p: 0.1, exposure: 101_500, el: 10_150, perMinute: 507.5, due: "2024-05-06T11:00:00.000Z" },
  "02": { p: 0.5, exposure: 39_500, el: 19_750, perMinute: 3_950, due: "2024-05-06T11:30:00.000Z" },
  "03": { p: 0.08, exposure: 97_500, el: 7_800, perMinute: 650, due: "2024-05-08T01:00:00.000Z" },
  "04": { p: 0.03, exposure: 361_500, el: 10_845, perMinute: 241, due: "2024-05-06T13:00:00.000Z" },
  "05": { p: 0.9, exposure: 15_750, el: 14_175, perMinute: 4_725, due: "2024-05-06T16:00:00.000Z" },
  "06": { p: 0.2, exposure: 43_500, el: 8_700, perMinute: 870, due: "2024-05-08T07:00:00.000Z" },
  "07": { p: 0.2, exposure: 43_500, el: 8_700, perMinute: 870, due: "2024-05-08T07:00:00.000Z" },
  "08": { p: 0.2, exposure: 43_500, el: 8_700, perMinute: 870, due: "2024-05-08T06:00:00.000Z" },
};

function riskOf(alert: AlertInput) {
  const { probability } = fraudProbability({ ...models[alert.model], score: alert.score });
  const exposure = computeExposure({ amountMinor: alert.amountMinor, recoveryRate: recoveryRate[alert.channel], fixedCostMinor });
  const expectedLoss = computeExpectedLoss({ fraudProbability: probability, exposureMinor: exposure });
  const arrivedAt = new Date(alert.arrivedAt);
  return { probability, exposure, expectedLoss, arrivedAt, due: dueAt({ arrivedAt, expectedLossMinor: expectedLoss, bands }) };
}

function queueEntries(orderMode: QueueOrderMode): QueueOrderEntry[] {
  return alerts.map((alert) => {
    const risk = riskOf(alert);
    return {
      id: alert.id,
      arrivedAt: risk.arrivedAt,
      dueAt: risk.due,
      priority: priorityValue({ expectedLossMinor: risk.expectedLoss, expectedHandlingMinutes: alert.handlingMinutes, orderMode }),
    };
  });
}

// Sorted from several input orders, so that the result cannot depend on where an alert started.
function sortedIds(orderMode: QueueOrderMode, now: Date): string[] {
  const random = seededRandom(6);
  const results = Array.from({ length: 10 }, () =>
    shuffled(queueEntries(orderMode), random)
      .sort((a, b) => compareQueueOrder(a, b, now))
      .map((e) => e.id.replace("alert-", "A").replace("A0", "A")),
  );
  for (const r of results) expect(r).toEqual(results[0]);
  return results[0];
}

describe("queue order on a hand-worked set of alerts", () => {
  it("computes the probability, exposure, expected loss and due time worked out by hand", () => {
    for (const alert of alerts) {
      const expected = handWorked[alert.id.slice(-2)];
      const risk = riskOf(alert);
      expect(risk.probability).toBeCloseTo(expected.p, 12);
      expect(risk.exposure).toBeCloseTo(expected.exposure, 6);
      expect(risk.expectedLoss).toBeCloseTo(expected.el, 6);
      expect(risk.due.toISOString()).toBe(expected.due);
      const perMinute = priorityValue({ expectedLossMinor: risk.expectedLoss, expectedHandlingMinutes: alert.handlingMinutes, orderMode: "loss_per_minute" });
      expect(perMinute).toBeCloseTo(expected.perMinute, 6);
    }
  });

  it("orders by expected loss, then older first, then id, when nothing is overdue", () => {
    // now = 10:00: the earliest due time is A1's 11:00, so nothing is overdue.
    // EL: A2 19 750 > A5 14 175 > A4 10 845 > A1 10 150 > A6 = A7 = A8 8 700 > A3 7 800;
    // among the 8 700s A8 arrived first (06:00), then A6 before A7 by id.
    expect(sortedIds("expected_loss", new Date("2024-05-06T10:00:00Z"))).toEqual(["A2", "A5", "A4", "A1", "A8", "A6", "A7", "A3"]);
  });

  it("orders by loss per minute under Smith's rule, which gives a different queue", () => {
    // EL/min: A5 4 725 > A2 3 950 > A6 = A7 = A8 870 > A3 650 > A1 507.5 > A4 241.
    // The slow, large-exposure A4 drops from third to last; the quick A5 moves to the front.
    expect(sortedIds("loss_per_minute", new Date("2024-05-06T10:00:00Z"))).toEqual(["A5", "A2", "A8", "A6", "A7", "A3", "A1", "A4"]);
  });

  it("puts overdue alerts first, counting an alert due exactly now as overdue", () => {
    // now = 13:00: A1 (due 11:00), A2 (11:30) and A4 (13:00, equal to now) are overdue.
    const now = new Date("2024-05-06T13:00:00Z");
    // Expected loss: overdue A2 19 750 > A4 10 845 > A1 10 150; then A5, A8, A6, A7, A3 as before.
    expect(sortedIds("expected_loss", now)).toEqual(["A2", "A4", "A1", "A5", "A8", "A6", "A7", "A3"]);
    // Smith's rule: overdue A2 3 950 > A1 507.5 > A4 241 come before A5 (4 725), the best ratio.
    expect(sortedIds("loss_per_minute", now)).toEqual(["A2", "A1", "A4", "A5", "A8", "A6", "A7", "A3"]);
    // One millisecond earlier A4 is not yet overdue and returns to its place after A5.
    expect(sortedIds("expected_loss", new Date("2024-05-06T12:59:59.999Z"))).toEqual(["A2", "A1", "A5", "A4", "A8", "A6", "A7", "A3"]);
  });
});

describe("queue order comparator", () => {
  const at = (iso: string) => new Date(iso);
  const now = at("2024-05-06T12:00:00Z");

  it("is a consistent total order on random entries (antisymmetric, transitive, reflexive zero)", () => {
    const random = seededRandom(12);
    const base = now.getTime();
    const entries: QueueOrderEntry[] = Array.from({ length: 60 }, (_, i) => ({
      id: `alert-${String(Math.floor(random() * 30)).padStart(2, "0")}-${i % 3}`,
      dueAt: new Date(base + (Math.floor(random() * 5) - 2) * 3_600_000),
      arrivedAt: new Date(base - Math.floor(random() * 4) * 3_600_000),
      priority: Math.floor(random() * 4) * 100,
    }));
    for (const a of entries) {
      expect(compareQueueOrder(a, a, now)).toBe(0);
      for (const b of entries) {
        expect(Math.sign(compareQueueOrder(a, b, now))).toBe(-Math.sign(compareQueueOrder(b, a, now)) || 0);
        for (const c of entries.slice(0, 15)) {
          if (compareQueueOrder(a, b, now) < 0 && compareQueueOrder(b, c, now) < 0) {
            expect(compareQueueOrder(a, c, now)).toBeLessThan(0);
          }
        }
      }
    }
  });

  it("rejects entries it cannot order", () => {
    const ok: QueueOrderEntry = { id: "a", dueAt: at("2024-05-06T13:00:00Z"), arrivedAt: at("2024-05-06T10:00:00Z"), priority: 1 };
    expect(() => compareQueueOrder(ok, { ...ok, priority: Number.NaN }, now)).toThrow(/b\.priority/);
    expect(() => compareQueueOrder({ ...ok, dueAt: new Date(Number.NaN) }, ok, now)).toThrow(/a\.dueAt/);
    expect(() => compareQueueOrder(ok, ok, new Date(Number.NaN))).toThrow(/now/);
  });
});
