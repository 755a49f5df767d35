import { describe, expect, it } from "vitest";
import { deriveRiskFields, type DeriveRiskFieldsInput } from "@/lib/alerts/derive-risk-fields";
import { defaultSettings } from "@/lib/settings/schemas";

// Settings used below (the defaults): recovery 0.3 card_present, 0.1 card_not_present, 0 atm;
// fixed cost per fraud 1,500; SLA 48 h from EL 0, 24 h from EL 5,000, 4 h from EL 50,000;
// 6 expected handling minutes.
const settings = { costs: defaultSettings.costs, queue: defaultSettings.queue };
const receivedAt = new Date("2026-11-30T10:00:00Z");
const hours = (n: number) => new Date(receivedAt.getTime() + n * 3_600_000);

const champion = { scoreKind: "probability" as const, negativeSamplingRate: 0.02, priorHitRate: null };
const detector = { scoreKind: "anomaly" as const, negativeSamplingRate: 1, priorHitRate: 0.12 };

function derive(overrides: Partial<Omit<DeriveRiskFieldsInput, "alert">> & { alert?: Partial<DeriveRiskFieldsInput["alert"]> } = {}) {
  return deriveRiskFields({
    modelVersion: champion,
    calibrationMap: null,
    settings,
    ...overrides,
    alert: { amountMinor: 12_000, channel: "card_not_present", score: 0.91, receivedAt, ...overrides.alert },
  });
}

describe("risk fields of an arriving alert", () => {
  it("corrects an undersampled probability score and prices the alert (worked by hand)", () => {
    // p  = β·s / (β·s − s + 1) = 0.02·0.91 / (0.0182 + 0.09) = 0.0182 / 0.1082 = 0.168207…
    // E  = 12,000·(1 − 0.1) + 1,500 = 10,800 + 1,500 = 12,300
    // EL = 0.168207… · 12,300 = 2,068.946… → stored 2,069; band from 0 → due in 48 h
    const fields = derive();
    expect(fields.probability).toBeCloseTo(0.0182 / 0.1082, 15);
    expect(fields).toMatchObject({
      calibrated: false,
      probabilitySource: "corrected_score",
      calibrationMapId: null,
      exposureMinor: 12_300,
      expectedLossMinor: 2_069,
      dueAt: hours(48),
    });
    // Priority keeps the unrounded expected loss.
    expect(fields.priority).toBeCloseTo(2_068.946_395_563_771, 9);
  });

  it("gives an anomaly score the prior hit rate until a map exists", () => {
    // p = 0.12 (prior); E = 600,000·(1 − 0) + 1,500 = 601,500; EL = 72,180 → band from 50,000 → 4 h
    const fields = derive({ modelVersion: detector, alert: { amountMinor: 600_000, channel: "atm", score: 7.3 } });
    expect(fields).toMatchObject({
      probability: 0.12,
      calibrated: false,
      probabilitySource: "prior_hit_rate",
      exposureMinor: 601_500,
      expectedLossMinor: 72_180,
      dueAt: hours(4),
    });
    expect(fields.priority).toBeCloseTo(72_180, 9);
  });

  it("uses the calibration map when there is one, and names it", () => {
    // map knots (0.2 → 0.05), (0.6 → 0.25); s = 0.5 interpolates to 0.05 + (0.3/0.4)·0.20 = 0.20
    // E = 40,000·(1 − 0.3) + 1,500 = 29,500; EL = 5,900 → band from 5,000 → 24 h
    const fields = derive({
      calibrationMap: { id: "5b0f3c1e-0000-4000-8000-000000000001", scores: [0.2, 0.6], probabilities: [0.05, 0.25] },
      alert: { amountMinor: 40_000, channel: "card_present", score: 0.5 },
    });
    expect(fields.probability).toBeCloseTo(0.2, 15);
    expect(fields).toMatchObject({
      calibrated: true,
      probabilitySource: "calibration_map",
      calibrationMapId: "5b0f3c1e-0000-4000-8000-000000000001",
      exposureMinor: 29_500,
      expectedLossMinor: 5_900,
      dueAt: hours(24),
    });
  });

  it("orders by expected loss per handling minute under Smith's rule", () => {
    // Same alert as the first example: 2,068.946… / 6 minutes = 344.824…
    const fields = derive({ settings: { ...settings, queue: { ...settings.queue, orderMode: "loss_per_minute" } } });
    expect(fields.priority).toBeCloseTo(2_068.946_395_563_771 / 6, 9);
  });

  it("assumes no recovery for a channel without a configured rate", () => {
    // A channel added to ingest but not to the cost settings: r = 0, E = 12,000 + 1,500 = 13,500
    const fields = derive({ alert: { channel: "wallet" } });
    expect(fields.exposureMinor).toBe(13_500);
  });

  it("chooses the SLA band from the expected loss as shown (rounded)", () => {
    // p = 0.4 (prior); E = 10,999 + 1,500 = 12,499; EL = 4,999.6 → shown as 5,000 → 24 h, not 48 h
    const fields = derive({
      modelVersion: { ...detector, priorHitRate: 0.4 },
      alert: { amountMinor: 10_999, channel: "atm", score: 5 },
    });
    expect(fields.expectedLossMinor).toBe(5_000);
    expect(fields.dueAt).toEqual(hours(24));
  });

  it("refuses a probability score outside [0, 1]", () => {
    expect(() => derive({ alert: { score: 1.2 } })).toThrow(RangeError);
  });
});
