import { describe, expect, it } from "vitest";
import {
  alertRowSchema,
  labelRowSchema,
  modelVersionInputSchema,
  outcomeRowSchema,
} from "@/lib/ingest/schemas";

const CHANNELS = ["card_present", "card_not_present", "atm"];
const alertSchema = alertRowSchema({ channels: CHANNELS });

/** A valid incoming alert, as the scoring service would send it; override fields per test. */
function alertInput(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    externalId: "tx-000183",
    occurredAt: "2025-03-01T14:05:00Z",
    amountMinor: 12_500,
    currency: "EUR",
    channel: "card_not_present",
    merchantCategoryCode: "5411",
    merchantCountry: "DE",
    entityRef: "tok_9c1e77",
    modelName: "cnp-gbm",
    modelVersion: "2025.02.1",
    score: 0.87,
    ...overrides,
  };
}

/** Paths of the issues of a failed parse, as "a.b[0]" strings. */
function issuePaths(result: { success: boolean; error?: { issues: { path: PropertyKey[] }[] } }): string[] {
  expect(result.success).toBe(false);
  return result.error!.issues.map((issue) => issue.path.map(String).join("."));
}

describe("alertRowSchema", () => {
  it("accepts a valid alert and fills the defaults", () => {
    const parsed = alertSchema.parse(alertInput());
    expect(parsed.occurredAt).toEqual(new Date(Date.UTC(2025, 2, 1, 14, 5, 0)));
    expect(parsed.reasonCodes).toEqual([]);
    expect(parsed.belowTheLine).toBe(false);
    expect(parsed.inclusionProbability).toBeNull();
  });

  it("converts an offset time to the same instant in UTC", () => {
    // ISO 8601 / RFC 3339 §5.6 (from memory): 15:05 at +01:00 is 14:05 UTC; 09:05 at -05:00 is 14:05 UTC.
    const plusOne = alertSchema.parse(alertInput({ occurredAt: "2025-03-01T15:05:00+01:00" }));
    const minusFive = alertSchema.parse(alertInput({ occurredAt: "2025-03-01T09:05:00.000-05:00" }));
    expect(plusOne.occurredAt.toISOString()).toBe("2025-03-01T14:05:00.000Z");
    expect(minusFive.occurredAt.toISOString()).toBe("2025-03-01T14:05:00.000Z");
  });

  it("rejects a time without an offset, which names no instant", () => {
    expect(issuePaths(alertSchema.safeParse(alertInput({ occurredAt: "2025-03-01T14:05:00" })))).toEqual(["occurredAt"]);
    expect(issuePaths(alertSchema.safeParse(alertInput({ occurredAt: "2025-02-30T14:05:00Z" })))).toEqual(["occurredAt"]);
  });

  it("strips unknown keys", () => {
    const parsed = alertSchema.parse(alertInput({ comment: "extra" }));
    expect("comment" in parsed).toBe(false);
  });

  it("requires amountMinor to be a whole, non-negative, exactly representable number", () => {
    expect(alertSchema.parse(alertInput({ amountMinor: 0 })).amountMinor).toBe(0);
    for (const amountMinor of [1.5, -1, 2 ** 53, "1250"]) {
      expect(issuePaths(alertSchema.safeParse(alertInput({ amountMinor }))), String(amountMinor)).toEqual(["amountMinor"]);
    }
  });

  it("requires an ISO 4217 alphabetic currency code", () => {
    // ISO 4217 alphabetic codes are three capital letters, e.g. EUR, JPY (from memory).
    expect(alertSchema.parse(alertInput({ currency: "JPY" })).currency).toBe("JPY");
    for (const currency of ["eur", "EURO", "E1R", "978"]) {
      const result = alertSchema.safeParse(alertInput({ currency }));
      expect(issuePaths(result), currency).toEqual(["currency"]);
      expect(result.error!.issues[0].message).toContain("ISO 4217");
    }
  });

  it("requires the merchant category code as a 4-digit string (ISO 18245)", () => {
    // ISO 18245 merchant category codes are four digits; a leading zero is significant, e.g. 0742 (from memory).
    expect(alertSchema.parse(alertInput({ merchantCategoryCode: "0742" })).merchantCategoryCode).toBe("0742");
    for (const merchantCategoryCode of ["541", "54111", "54a1", 5411]) {
      expect(issuePaths(alertSchema.safeParse(alertInput({ merchantCategoryCode }))), String(merchantCategoryCode)).toEqual([
        "merchantCategoryCode",
      ]);
    }
  });

  it("requires an ISO 3166-1 alpha-2 merchant country", () => {
    // ISO 3166-1: alpha-2 "DE", alpha-3 "DEU", numeric "276" (from memory); only alpha-2 is accepted.
    for (const merchantCountry of ["DEU", "de", "276"]) {
      expect(issuePaths(alertSchema.safeParse(alertInput({ merchantCountry }))), merchantCountry).toEqual(["merchantCountry"]);
    }
  });

  it("accepts only configured channels and lists them in the message", () => {
    const result = alertSchema.safeParse(alertInput({ channel: "phone" }));
    expect(issuePaths(result)).toEqual(["channel"]);
    expect(result.error!.issues[0].message).toBe("expected one of card_present, card_not_present, atm");
    expect(alertRowSchema({ channels: ["phone"] }).parse(alertInput({ channel: "phone" })).channel).toBe("phone");
  });

  it("refuses to build without channels", () => {
    expect(() => alertRowSchema({ channels: [] })).toThrow(/channel/);
  });

  it("limits the lengths of identifiers", () => {
    expect(issuePaths(alertSchema.safeParse(alertInput({ externalId: "" })))).toEqual(["externalId"]);
    expect(issuePaths(alertSchema.safeParse(alertInput({ externalId: "x".repeat(201) })))).toEqual(["externalId"]);
    expect(alertSchema.parse(alertInput({ externalId: "x".repeat(200) })).externalId).toHaveLength(200);
    expect(issuePaths(alertSchema.safeParse(alertInput({ entityRef: "" })))).toEqual(["entityRef"]);
    expect(issuePaths(alertSchema.safeParse(alertInput({ entityRef: "x".repeat(101) })))).toEqual(["entityRef"]);
  });

  it("requires a finite score", () => {
    for (const score of [Number.NaN, Number.POSITIVE_INFINITY, "0.9", null]) {
      expect(issuePaths(alertSchema.safeParse(alertInput({ score }))), String(score)).toEqual(["score"]);
    }
    expect(alertSchema.parse(alertInput({ score: -3.2 })).score).toBe(-3.2); // anomaly scores may be negative
  });

  it("validates reason codes and reports the element's path", () => {
    const ok = alertSchema.parse(alertInput({ reasonCodes: [{ code: "velocity_24h", contribution: 0.41 }] }));
    expect(ok.reasonCodes).toEqual([{ code: "velocity_24h", contribution: 0.41 }]);
    const bad = alertSchema.safeParse(
      alertInput({ reasonCodes: [{ code: "a", contribution: 1 }, { code: "b", contribution: "high" }, { contribution: 0 }] }),
    );
    expect(issuePaths(bad)).toEqual(["reasonCodes.1.contribution", "reasonCodes.2.code"]);
  });

  describe("below-the-line samples and their inclusion probability π", () => {
    it("requires π in (0, 1] when belowTheLine is true", () => {
      expect(alertSchema.parse(alertInput({ belowTheLine: true, inclusionProbability: 0.02 })).inclusionProbability).toBe(0.02);
      expect(alertSchema.parse(alertInput({ belowTheLine: true, inclusionProbability: 1 })).inclusionProbability).toBe(1);
      for (const inclusionProbability of [undefined, null]) {
        const result = alertSchema.safeParse(alertInput({ belowTheLine: true, inclusionProbability }));
        expect(issuePaths(result)).toEqual(["inclusionProbability"]);
        expect(result.error!.issues[0].message).toMatch(/required when belowTheLine is true/);
      }
      for (const inclusionProbability of [0, -0.1, 1.2]) {
        const result = alertSchema.safeParse(alertInput({ belowTheLine: true, inclusionProbability }));
        expect(issuePaths(result), String(inclusionProbability)).toEqual(["inclusionProbability"]);
      }
    });

    it("forbids π when belowTheLine is false or absent", () => {
      expect(alertSchema.parse(alertInput({ belowTheLine: false, inclusionProbability: null })).inclusionProbability).toBeNull();
      for (const belowTheLine of [false, undefined]) {
        const result = alertSchema.safeParse(alertInput({ belowTheLine, inclusionProbability: 0.5 }));
        expect(issuePaths(result)).toEqual(["inclusionProbability"]);
        expect(result.error!.issues[0].message).toMatch(/must be absent or null when belowTheLine is false/);
      }
    });
  });
});

describe("labelRowSchema", () => {
  const label = (overrides: Record<string, unknown> = {}) => ({
    externalId: "tx-000183",
    label: "fraud",
    source: "chargeback",
    observedAt: "2025-06-12T08:00:00Z",
    ...overrides,
  });

  it("accepts a chargeback label and defaults the reference to null", () => {
    const parsed = labelRowSchema.parse(label());
    expect(parsed).toEqual({
      externalId: "tx-000183",
      label: "fraud",
      source: "chargeback",
      observedAt: new Date("2025-06-12T08:00:00Z"),
      reference: null,
    });
    expect(labelRowSchema.parse(label({ source: "customer_report", label: "genuine", reference: "case 77" })).reference).toBe("case 77");
  });

  it("rejects unknown labels and sources; analyst labels are not ingested", () => {
    expect(issuePaths(labelRowSchema.safeParse(label({ label: "maybe" })))).toEqual(["label"]);
    expect(issuePaths(labelRowSchema.safeParse(label({ source: "analyst" })))).toEqual(["source"]);
    expect(issuePaths(labelRowSchema.safeParse(label({ reference: "r".repeat(201) })))).toEqual(["reference"]);
    expect(issuePaths(labelRowSchema.safeParse(label({ observedAt: "12/06/2025" })))).toEqual(["observedAt"]);
  });
});

describe("outcomeRowSchema", () => {
  const outcome = (overrides: Record<string, unknown> = {}) => ({
    externalId: "tx-000183",
    outcome: "confirmed_fraud",
    reason: "customer confirmed the card was stolen",
    reviewerEmail: "reviewer.one@example.org",
    claimedAt: "2025-03-01T14:10:00Z",
    closedAt: "2025-03-01T14:22:00Z",
    ...overrides,
  });

  it("accepts a single-reviewer outcome with null optional fields", () => {
    const parsed = outcomeRowSchema.parse(outcome());
    expect(parsed.note).toBeNull();
    expect(parsed.secondReviewerEmail).toBeNull();
    expect(parsed.secondOutcome).toBeNull();
    expect(parsed.closedAt.getTime() - parsed.claimedAt.getTime()).toBe(12 * 60 * 1000);
  });

  it("rejects closedAt before claimedAt, at closedAt; equal times are fine", () => {
    expect(issuePaths(outcomeRowSchema.safeParse(outcome({ closedAt: "2025-03-01T14:09:59Z" })))).toEqual(["closedAt"]);
    expect(outcomeRowSchema.safeParse(outcome({ closedAt: "2025-03-01T14:10:00Z" })).success).toBe(true);
    // Same instant written with another offset is not "earlier".
    expect(outcomeRowSchema.safeParse(outcome({ closedAt: "2025-03-01T15:10:00+01:00" })).success).toBe(true);
  });

  it("requires the second reviewer and second outcome together", () => {
    const both = outcomeRowSchema.parse(outcome({ secondReviewerEmail: "reviewer.two@example.org", secondOutcome: "legitimate" }));
    expect(both.secondOutcome).toBe("legitimate");
    expect(issuePaths(outcomeRowSchema.safeParse(outcome({ secondReviewerEmail: "reviewer.two@example.org" })))).toEqual([
      "secondOutcome",
    ]);
    expect(issuePaths(outcomeRowSchema.safeParse(outcome({ secondOutcome: "legitimate" })))).toEqual(["secondReviewerEmail"]);
  });

  it("rejects a second review by the same person", () => {
    const result = outcomeRowSchema.safeParse(
      outcome({ secondReviewerEmail: "Reviewer.One@example.org", secondOutcome: "confirmed_fraud" }),
    );
    expect(issuePaths(result)).toEqual(["secondReviewerEmail"]);
  });

  it("checks outcome words, reason length and email", () => {
    expect(issuePaths(outcomeRowSchema.safeParse(outcome({ outcome: "fraud" })))).toEqual(["outcome"]);
    expect(issuePaths(outcomeRowSchema.safeParse(outcome({ reason: "" })))).toEqual(["reason"]);
    expect(issuePaths(outcomeRowSchema.safeParse(outcome({ reason: "r".repeat(201) })))).toEqual(["reason"]);
    expect(issuePaths(outcomeRowSchema.safeParse(outcome({ reviewerEmail: "reviewer one" })))).toEqual(["reviewerEmail"]);
  });
});

describe("modelVersionInputSchema", () => {
  it("defaults β to 1 (no undersampling) and active to true for a probability model", () => {
    const parsed = modelVersionInputSchema.parse({
      modelName: "cnp-gbm",
      version: "2025.02.1",
      scoreKind: "probability",
      alertThreshold: 0.6,
    });
    expect(parsed).toEqual({
      modelName: "cnp-gbm",
      version: "2025.02.1",
      scoreKind: "probability",
      negativeSamplingRate: 1,
      priorHitRate: null,
      alertThreshold: 0.6,
      active: true,
    });
  });

  it("accepts β in (0, 1] only", () => {
    const base = { modelName: "m", version: "1", scoreKind: "probability", alertThreshold: 0.5 };
    expect(modelVersionInputSchema.parse({ ...base, negativeSamplingRate: 0.05 }).negativeSamplingRate).toBe(0.05);
    for (const negativeSamplingRate of [0, -0.5, 1.01]) {
      expect(issuePaths(modelVersionInputSchema.safeParse({ ...base, negativeSamplingRate })), String(negativeSamplingRate)).toEqual([
        "negativeSamplingRate",
      ]);
    }
  });

  it("requires a prior hit rate in [0, 1] for anomaly scores and refuses β for them", () => {
    const base = { modelName: "som-distance", version: "3", scoreKind: "anomaly", alertThreshold: 4.2 };
    expect(issuePaths(modelVersionInputSchema.safeParse(base))).toEqual(["priorHitRate"]);
    expect(modelVersionInputSchema.parse({ ...base, priorHitRate: 0 }).priorHitRate).toBe(0);
    expect(modelVersionInputSchema.parse({ ...base, priorHitRate: 1 }).priorHitRate).toBe(1);
    expect(issuePaths(modelVersionInputSchema.safeParse({ ...base, priorHitRate: 1.1 }))).toEqual(["priorHitRate"]);
    expect(issuePaths(modelVersionInputSchema.safeParse({ ...base, priorHitRate: 0.1, negativeSamplingRate: 0.5 }))).toEqual([
      "negativeSamplingRate",
    ]);
  });

  it("rejects unknown score kinds", () => {
    const result = modelVersionInputSchema.safeParse({ modelName: "m", version: "1", scoreKind: "rank", alertThreshold: 1 });
    expect(issuePaths(result)).toEqual(["scoreKind"]);
    expect(result.error!.issues[0].message).toBe("expected one of probability, anomaly");
  });
});
