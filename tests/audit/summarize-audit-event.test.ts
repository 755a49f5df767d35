import { describe, expect, it } from "vitest";
import { auditActions } from "@/lib/audit/schemas";
import { auditActionLabel, summarizeAuditPayload } from "@/lib/audit/summarize-audit-event";

const alertRef = { alertId: "0b5f3f4e-8d0e-4c8e-a7a5-3b7f7f1e2a10", externalId: "TX-77" };

describe("audit event summaries", () => {
  it("names actions in words", () => {
    expect(auditActionLabel("second_review.overturned")).toBe("Second review overturned");
    expect(auditActionLabel("outcome.recorded")).toBe("Outcome recorded");
  });

  it("says what a clearing decision was, on what grounds and how long it took", () => {
    expect(
      summarizeAuditPayload("outcome.recorded", { ...alertRef, outcome: "confirmed_fraud", reason: "card used in two countries within an hour", round: 1, handlingSeconds: 420, origin: "screen", sentToSecondReview: true }),
    ).toBe('TX-77: confirmed fraud · "card used in two countries within an hour" · first review · handled in 7 min · sent to second review');
    expect(summarizeAuditPayload("second_review.overturned", { ...alertRef, firstOutcome: "legitimate", secondOutcome: "confirmed_fraud" })).toBe("TX-77: legitimate → confirmed fraud");
  });

  it("names only the settings that changed", () => {
    expect(summarizeAuditPayload("settings.changed", { key: "queue", before: { order: "a", lease: 15 }, after: { order: "b", lease: 15 } })).toBe("queue: order");
  });

  it("says how many waiting alerts a model-version change re-derived, and reads events saved before that was recorded", () => {
    const changes = { negativeSamplingRate: { from: 0.1, to: 0.5 }, alertThreshold: { from: 0.3, to: 0.4 } };
    expect(summarizeAuditPayload("model_version.saved", { modelName: "sampled-gbm", version: "1.0.0", changes, recomputedAlerts: 12 })).toBe(
      "sampled-gbm 1.0.0: alertThreshold, negativeSamplingRate · 12 waiting alerts re-derived",
    );
    expect(summarizeAuditPayload("model_version.saved", { modelName: "sampled-gbm", version: "1.0.0", changes })).toBe("sampled-gbm 1.0.0: alertThreshold, negativeSamplingRate");
  });

  it("describes a view or an export by its filter", () => {
    expect(summarizeAuditPayload("audit.viewed", { filter: { preset: "cleared_by", actor: "kim@example.org" } })).toBe("preset cleared_by, actor kim@example.org");
    expect(summarizeAuditPayload("audit.exported", { filter: {}, rowCount: 12, throughEventId: "40", format: "csv" })).toBe("12 rows (no filter)");
  });

  it("falls back to plain values when a payload does not match its action's schema", () => {
    expect(summarizeAuditPayload("outcome.recorded", { outcome: "legitimate" })).toBe("outcome=legitimate");
    expect(summarizeAuditPayload("retired.action", { a: 1, b: { c: 2 } })).toBe('a=1, b={"c":2}');
  });

  it("never grows past 200 characters", () => {
    const text = summarizeAuditPayload("api_client.refused", { reason: "x".repeat(500), path: "/api" });
    expect(text.length).toBe(200);
    expect(text.endsWith("…")).toBe(true);
  });

  it("knows every action of the union", () => {
    expect(auditActions).toContain("audit.exported");
    expect(new Set(auditActions).size).toBe(auditActions.length);
  });
});
