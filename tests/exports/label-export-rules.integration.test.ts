// What goes into a label export, row by row: as of, maturity, weights, override order, inconclusive
// and unreviewed alerts, second reviews, pseudonymous reviewers. Each test has its own model version.
import { describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { labelExportChoicesSchema, labelExportRowSchema, type LabelExportChoicesInput, type LabelExportRow } from "@/lib/exports/schemas";
import { streamLabelExportRows, writeLabelExport } from "@/lib/exports/stream-label-export";
import {
  at,
  choicesFor,
  collectingSink,
  createAlert,
  createCalibrationMap,
  createLabel,
  createModelVersion,
  createOutcome,
  createPerson,
  daysAfter,
} from "@/tests/exports/export-fixtures";

const database = await useTestDatabase();

async function exportRows(input: LabelExportChoicesInput): Promise<LabelExportRow[]> {
  const choices = labelExportChoicesSchema.parse(input);
  const rows: LabelExportRow[] = [];
  for await (const batch of streamLabelExportRows(database.pool, { choices, batchSize: 2 })) rows.push(...batch);
  // Every row the query produces is a valid row of the data dictionary.
  for (const row of rows) labelExportRowSchema.parse(row);
  return rows;
}

const byExternalId = (rows: LabelExportRow[]) => new Map(rows.map((row) => [row.external_id, row]));

describe("as of: only what the desk knew at that moment", () => {
  it("leaves out a chargeback received after the as-of time and keeps the earlier analyst outcome", async () => {
    const version = await createModelVersion(database.pool);
    const reviewer = await createPerson(database.pool);
    const alert = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-10T09:00:00Z"), state: "closed", finalOutcome: "legitimate" });
    await createOutcome(database.pool, alert.id, reviewer, { outcome: "legitimate", closedAt: at("2026-01-11T10:00:00Z") });
    // The dispute happened on 1 February but its file reached the desk on 15 March.
    await createLabel(database.pool, alert, { label: "fraud", source: "chargeback", observedAt: at("2026-02-01T00:00:00Z"), receivedAt: at("2026-03-15T06:00:00Z") });

    const [before] = await exportRows(choicesFor(version.id, { asOf: at("2026-03-01T00:00:00Z") }));
    expect(before).toMatchObject({
      external_id: alert.externalId,
      label: 0,
      label_source: "analyst",
      label_at: "2026-01-11T10:00:00.000Z",
      label_received_at: "2026-01-11T10:00:00.000Z",
      overrides_outcome: false,
      outcome: "legitimate",
      closed_at: "2026-01-11T10:00:00.000Z",
      reviewer_id: reviewer.pseudonym,
    });

    const [after] = await exportRows(choicesFor(version.id, { asOf: at("2026-04-01T00:00:00Z") }));
    expect(after).toMatchObject({
      label: 1,
      label_source: "chargeback",
      label_at: "2026-02-01T00:00:00.000Z",
      label_received_at: "2026-03-15T06:00:00.000Z",
      overrides_outcome: true,
      outcome: "legitimate",
    });
  });

  it("leaves out an outcome closed after the as-of time, and alerts received after it", async () => {
    const version = await createModelVersion(database.pool);
    const reviewer = await createPerson(database.pool);
    const late = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-10T09:00:00Z"), state: "closed" });
    await createOutcome(database.pool, late.id, reviewer, { outcome: "confirmed_fraud", closedAt: at("2026-03-10T00:00:00Z") });
    const notYetReceived = await createAlert(database.pool, version.id, { occurredAt: at("2026-02-27T00:00:00Z"), receivedAt: at("2026-03-02T00:00:00Z") });
    await createLabel(database.pool, notYetReceived, { label: "fraud", source: "customer_report", observedAt: at("2026-02-28T00:00:00Z"), receivedAt: at("2026-02-28T00:00:00Z") });
    const asOf = at("2026-03-01T00:00:00Z");

    expect(await exportRows(choicesFor(version.id, { asOf }))).toEqual([]);
    const withUnreviewed = await exportRows(choicesFor(version.id, { asOf, keepUnreviewed: true }));
    expect(withUnreviewed.map((row) => row.external_id)).toEqual([late.externalId]);
    expect(withUnreviewed[0]).toMatchObject({ outcome: null, closed_at: null, label: null, label_source: null, reviewer_id: null, second_review: false });
  });

  it("leaves the probability empty when the calibration map behind it was fitted after the as-of time", async () => {
    const version = await createModelVersion(database.pool);
    const reviewer = await createPerson(database.pool);
    const earlyMap = await createCalibrationMap(database.pool, version.id, at("2026-01-01T00:00:00Z"));
    const lateMap = await createCalibrationMap(database.pool, version.id, at("2026-03-05T00:00:00Z"));
    const a = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-10T00:00:00Z"), probability: 0.31, calibrationMapId: earlyMap });
    const b = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-11T00:00:00Z"), probability: 0.62, calibrationMapId: lateMap });
    const c = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-12T00:00:00Z"), probability: 0.2 });
    for (const alert of [a, b, c]) await createOutcome(database.pool, alert.id, reviewer, { outcome: "legitimate", closedAt: at("2026-01-20T00:00:00Z") });

    const rows = byExternalId(await exportRows(choicesFor(version.id, { asOf: at("2026-03-01T00:00:00Z") })));
    expect(rows.get(a.externalId)?.probability).toBe(0.31);
    expect(rows.get(b.externalId)?.probability).toBeNull();
    expect(rows.get(c.externalId)?.probability).toBe(0.2);
  });
});

describe("maturity", () => {
  it("keeps only alerts that occurred at least the maturity window before the as-of time", async () => {
    const version = await createModelVersion(database.pool);
    const reviewer = await createPerson(database.pool);
    const asOf = at("2026-06-01T00:00:00Z");
    const ages = [121, 120, 119, 10];
    const alerts = [];
    for (const age of ages) {
      const alert = await createAlert(database.pool, version.id, { occurredAt: daysAfter(asOf, -age), externalId: `age-${age}-${version.version}` });
      await createOutcome(database.pool, alert.id, reviewer, { outcome: "legitimate", closedAt: daysAfter(asOf, -age + 1) });
      alerts.push(alert);
    }
    const mature = await exportRows(choicesFor(version.id, { asOf, maturityDays: 120 }));
    // occurred_at ≤ asOf − 120 days: exactly 120 days old is mature.
    expect(mature.map((row) => row.external_id)).toEqual([alerts[0].externalId, alerts[1].externalId]);
    const all = await exportRows(choicesFor(version.id, { asOf, maturityDays: 0 }));
    expect(all).toHaveLength(4);
  });
});

describe("below-the-line samples and weights", () => {
  it("weights below-the-line samples by 1/π and ordinary alerts by 1, and leaves the samples out on request", async () => {
    const version = await createModelVersion(database.pool);
    const reviewer = await createPerson(database.pool);
    const ordinary = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-01T00:00:00Z") });
    const sampledOneIn20 = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-02T00:00:00Z"), belowTheLine: true, inclusionProbability: 0.05, score: 0.3 });
    const sampledOneIn4 = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-03T00:00:00Z"), belowTheLine: true, inclusionProbability: 0.25, score: 0.2 });
    for (const alert of [ordinary, sampledOneIn20, sampledOneIn4]) {
      await createOutcome(database.pool, alert.id, reviewer, { outcome: "legitimate", closedAt: at("2026-01-05T00:00:00Z") });
    }
    const asOf = at("2026-02-01T00:00:00Z");

    const rows = await exportRows(choicesFor(version.id, { asOf }));
    expect(rows.map((row) => [row.external_id, row.below_the_line, row.inclusion_probability, row.weight])).toEqual([
      [ordinary.externalId, false, null, 1],
      [sampledOneIn20.externalId, true, 0.05, 20],
      [sampledOneIn4.externalId, true, 0.25, 4],
    ]);
    // Horvitz–Thompson: the weights add up to the estimated number of transactions the rows stand for.
    expect(rows.reduce((sum, row) => sum + row.weight, 0)).toBeCloseTo(25, 12);

    const withoutSamples = await exportRows(choicesFor(version.id, { asOf, includeBelowTheLine: false }));
    expect(withoutSamples.map((row) => row.external_id)).toEqual([ordinary.externalId]);
  });
});

describe("override order", () => {
  it("lets a chargeback or customer report override the analyst outcome, and says so", async () => {
    const version = await createModelVersion(database.pool);
    const reviewer = await createPerson(database.pool);
    const asOf = at("2026-06-01T00:00:00Z");
    const closedAt = at("2026-01-05T00:00:00Z");

    const clearedButFraud = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-01T00:00:00Z"), externalId: `cleared-${version.version}` });
    await createOutcome(database.pool, clearedButFraud.id, reviewer, { outcome: "legitimate", closedAt });
    await createLabel(database.pool, clearedButFraud, { label: "fraud", source: "chargeback", observedAt: at("2026-02-01T00:00:00Z"), receivedAt: at("2026-02-20T00:00:00Z") });

    const confirmedButGenuine = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-02T00:00:00Z"), externalId: `confirmed-${version.version}` });
    await createOutcome(database.pool, confirmedButGenuine.id, reviewer, { outcome: "confirmed_fraud", closedAt });
    await createLabel(database.pool, confirmedButGenuine, { label: "genuine", source: "customer_report", observedAt: at("2026-01-10T00:00:00Z"), receivedAt: at("2026-01-10T00:00:00Z") });

    // Both external sources: the latest observed wins, although the chargeback's file came in last.
    const both = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-03T00:00:00Z"), externalId: `both-${version.version}` });
    await createOutcome(database.pool, both.id, reviewer, { outcome: "confirmed_fraud", closedAt });
    await createLabel(database.pool, both, { label: "fraud", source: "chargeback", observedAt: at("2026-02-01T00:00:00Z"), receivedAt: at("2026-04-01T00:00:00Z") });
    await createLabel(database.pool, both, { label: "genuine", source: "customer_report", observedAt: at("2026-02-10T00:00:00Z"), receivedAt: at("2026-02-11T00:00:00Z") });

    // An external label without any analyst outcome overrides nothing.
    const neverReviewed = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-04T00:00:00Z"), externalId: `unreviewed-${version.version}` });
    await createLabel(database.pool, neverReviewed, { label: "fraud", source: "customer_report", observedAt: at("2026-01-06T00:00:00Z"), receivedAt: at("2026-01-07T00:00:00Z") });

    // The labels table's own `analyst` copies are ignored: the outcome is read from outcomes.
    const analystCopy = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-05T00:00:00Z"), externalId: `copy-${version.version}` });
    await createOutcome(database.pool, analystCopy.id, reviewer, { outcome: "legitimate", closedAt });
    await createLabel(database.pool, analystCopy, { label: "fraud", source: "analyst", observedAt: closedAt, receivedAt: closedAt });

    const rows = byExternalId(await exportRows(choicesFor(version.id, { asOf })));
    const pick = (row: LabelExportRow | undefined) => row && { label: row.label, label_source: row.label_source, overrides_outcome: row.overrides_outcome, outcome: row.outcome };
    expect(pick(rows.get(clearedButFraud.externalId))).toEqual({ label: 1, label_source: "chargeback", overrides_outcome: true, outcome: "legitimate" });
    expect(pick(rows.get(confirmedButGenuine.externalId))).toEqual({ label: 0, label_source: "customer_report", overrides_outcome: true, outcome: "confirmed_fraud" });
    expect(pick(rows.get(both.externalId))).toEqual({ label: 0, label_source: "customer_report", overrides_outcome: true, outcome: "confirmed_fraud" });
    expect(rows.get(both.externalId)?.label_at).toBe("2026-02-10T00:00:00.000Z");
    expect(pick(rows.get(neverReviewed.externalId))).toEqual({ label: 1, label_source: "customer_report", overrides_outcome: false, outcome: null });
    expect(pick(rows.get(analystCopy.externalId))).toEqual({ label: 0, label_source: "analyst", overrides_outcome: false, outcome: "legitimate" });

    // Before either file of `both` arrived, the analyst outcome stood; with only the customer report
    // known, it decided; the chargeback that arrived later but was observed earlier changes nothing.
    const beforeEither = byExternalId(await exportRows(choicesFor(version.id, { asOf: at("2026-02-10T12:00:00Z") })));
    expect(pick(beforeEither.get(both.externalId))).toEqual({ label: 1, label_source: "analyst", overrides_outcome: false, outcome: "confirmed_fraud" });
    const reportOnly = byExternalId(await exportRows(choicesFor(version.id, { asOf: at("2026-03-01T00:00:00Z") })));
    expect(pick(reportOnly.get(both.externalId))).toEqual({ label: 0, label_source: "customer_report", overrides_outcome: true, outcome: "confirmed_fraud" });
  });
});

describe("inconclusive and unreviewed alerts", () => {
  it("leaves inconclusive outcomes out by default and keeps them with an empty label on request", async () => {
    const version = await createModelVersion(database.pool);
    const reviewer = await createPerson(database.pool);
    const asOf = at("2026-06-01T00:00:00Z");
    const inconclusive = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-01T00:00:00Z") });
    await createOutcome(database.pool, inconclusive.id, reviewer, { outcome: "inconclusive", closedAt: at("2026-01-02T00:00:00Z") });
    const inconclusiveThenChargeback = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-03T00:00:00Z") });
    await createOutcome(database.pool, inconclusiveThenChargeback.id, reviewer, { outcome: "inconclusive", closedAt: at("2026-01-04T00:00:00Z") });
    await createLabel(database.pool, inconclusiveThenChargeback, { label: "fraud", source: "chargeback", observedAt: at("2026-02-01T00:00:00Z"), receivedAt: at("2026-02-02T00:00:00Z") });

    const dropped = await exportRows(choicesFor(version.id, { asOf }));
    expect(dropped.map((row) => [row.external_id, row.label, row.label_source, row.overrides_outcome])).toEqual([[inconclusiveThenChargeback.externalId, 1, "chargeback", true]]);

    const kept = await exportRows(choicesFor(version.id, { asOf, keepInconclusive: true }));
    expect(kept).toHaveLength(2);
    expect(kept[0]).toMatchObject({ external_id: inconclusive.externalId, outcome: "inconclusive", label: null, label_source: null, label_at: null, reviewer_id: reviewer.pseudonym });
  });

  it("treats a first outcome that waits for its second review as not final, and uses the second once it is closed", async () => {
    const version = await createModelVersion(database.pool);
    const first = await createPerson(database.pool);
    const second = await createPerson(database.pool, { role: "supervisor" });
    const overturned = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-01T00:00:00Z"), state: "closed", finalOutcome: "confirmed_fraud" });
    await createOutcome(database.pool, overturned.id, first, { outcome: "legitimate", closedAt: at("2026-01-02T00:00:00Z"), round: 1 });
    await createOutcome(database.pool, overturned.id, second, { outcome: "confirmed_fraud", closedAt: at("2026-01-09T00:00:00Z"), round: 2 });
    const stillWaiting = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-01T12:00:00Z"), state: "second_review" });
    await createOutcome(database.pool, stillWaiting.id, first, { outcome: "legitimate", closedAt: at("2026-01-02T00:00:00Z"), round: 1 });

    const between = await exportRows(choicesFor(version.id, { asOf: at("2026-01-05T00:00:00Z"), keepUnreviewed: true }));
    expect(between.map((row) => [row.external_id, row.outcome, row.label, row.second_review])).toEqual([
      [overturned.externalId, null, null, false],
      [stillWaiting.externalId, null, null, false],
    ]);
    expect(await exportRows(choicesFor(version.id, { asOf: at("2026-01-05T00:00:00Z") }))).toEqual([]);

    const later = await exportRows(choicesFor(version.id, { asOf: at("2026-02-01T00:00:00Z") }));
    expect(later).toHaveLength(1);
    expect(later[0]).toMatchObject({
      external_id: overturned.externalId,
      outcome: "confirmed_fraud",
      label: 1,
      label_source: "analyst",
      second_review: true,
      closed_at: "2026-01-09T00:00:00.000Z",
      reviewer_id: second.pseudonym,
    });
  });
});

describe("people in exports", () => {
  it("names reviewers only by their stable pseudonymous id, never by name or email, in every format", async () => {
    const version = await createModelVersion(database.pool);
    const one = await createPerson(database.pool, { email: "wren.halloway@example.org", displayName: "Wren Halloway" });
    const two = await createPerson(database.pool, { email: "osric.penmarch@example.org", displayName: "Osric Penmarch" });
    for (const [index, person] of [one, two, one].entries()) {
      const alert = await createAlert(database.pool, version.id, { occurredAt: at(`2026-01-0${index + 1}T00:00:00Z`) });
      await createOutcome(database.pool, alert.id, person, { outcome: "confirmed_fraud", closedAt: at(`2026-01-0${index + 2}T00:00:00Z`) });
    }
    const asOf = at("2026-02-01T00:00:00Z");
    const rows = await exportRows(choicesFor(version.id, { asOf }));
    expect(rows.map((row) => row.reviewer_id)).toEqual([one.pseudonym, two.pseudonym, one.pseudonym]);
    expect(one.pseudonym).toMatch(/^rv_[0-9a-f]{12}$/);

    for (const format of ["csv", "jsonl", "parquet"] as const) {
      const { sink, bytes } = collectingSink();
      await writeLabelExport(database.pool, { choices: labelExportChoicesSchema.parse(choicesFor(version.id, { asOf, format })), sink });
      const text = bytes().toString("latin1").toLowerCase();
      for (const secret of [one.email, two.email, "wren", "halloway", "osric", "penmarch", one.id, two.id]) expect(text).not.toContain(secret.toLowerCase());
      expect(text).toContain(one.pseudonym);
    }
  });
});

describe("order and selection", () => {
  it("selects the chosen model versions and occurred_at range [from, to), in occurred_at order", async () => {
    const version = await createModelVersion(database.pool);
    const other = await createModelVersion(database.pool);
    const reviewer = await createPerson(database.pool);
    const made = [];
    for (const [modelVersionId, occurredAt] of [
      [version.id, "2026-01-31T23:59:59.999Z"],
      [version.id, "2026-01-15T00:00:00Z"],
      [other.id, "2026-01-10T00:00:00Z"],
      [version.id, "2026-01-01T00:00:00Z"],
      [version.id, "2026-02-01T00:00:00Z"],
      [version.id, "2025-12-31T23:59:59.999Z"],
    ] as const) {
      const alert = await createAlert(database.pool, modelVersionId, { occurredAt: at(occurredAt) });
      await createOutcome(database.pool, alert.id, reviewer, { outcome: "legitimate", closedAt: at("2026-02-02T00:00:00Z") });
      made.push(alert);
    }
    const range = { occurredFrom: at("2026-01-01T00:00:00Z"), occurredTo: at("2026-02-01T00:00:00Z"), asOf: at("2026-03-01T00:00:00Z") };
    const rows = await exportRows(choicesFor(version.id, range));
    expect(rows.map((row) => row.external_id)).toEqual([made[3].externalId, made[1].externalId, made[0].externalId]);
    const both = await exportRows({ ...choicesFor(version.id, range), modelVersionIds: [version.id, other.id] });
    expect(both.map((row) => row.external_id)).toEqual([made[3].externalId, made[2].externalId, made[1].externalId, made[0].externalId]);
    expect(both[1]).toMatchObject({ model_name: other.modelName, model_version: other.version });
  });
});

describe("the row count announced before the rows", () => {
  it("equals the rows that follow, whether inconclusive and unreviewed alerts are kept or not", async () => {
    const version = await createModelVersion(database.pool);
    const reviewer = await createPerson(database.pool);
    const outcomes = ["confirmed_fraud", "legitimate", "inconclusive", null, "legitimate"] as const;
    for (const [index, outcome] of outcomes.entries()) {
      const alert = await createAlert(database.pool, version.id, { occurredAt: at(`2026-01-0${index + 1}T00:00:00Z`) });
      if (outcome) await createOutcome(database.pool, alert.id, reviewer, { outcome, closedAt: at("2026-01-10T00:00:00Z") });
    }
    // Another version's alert in the same days: outside the selection, so outside the count.
    await createAlert(database.pool, (await createModelVersion(database.pool)).id, { occurredAt: at("2026-01-02T00:00:00Z") });
    const range = { occurredFrom: at("2026-01-01T00:00:00Z"), occurredTo: at("2026-02-01T00:00:00Z"), asOf: at("2026-03-01T00:00:00Z") };
    for (const [keep, expected] of [
      [{ keepInconclusive: true, keepUnreviewed: true }, 5],
      [{ keepInconclusive: true, keepUnreviewed: false }, 4],
      [{ keepInconclusive: false, keepUnreviewed: false }, 3],
    ] as const) {
      const choices = labelExportChoicesSchema.parse({ ...choicesFor(version.id, range), ...keep });
      let announced = -1;
      let rows = 0;
      for await (const batch of streamLabelExportRows(database.pool, { choices, batchSize: 2, onCount: (n) => void (announced = n) })) rows += batch.length;
      expect(rows).toBe(expected);
      expect(announced).toBe(expected);
    }
  });
});

describe("a large export read in two parts", () => {
  // The parts split the occurred_at range at the middle of the time that can hold rows (here 1 to 31
  // January, maturity ending it at asOf on the 21st: the middle is the 11th).
  it("gives the same rows in the same order as one cursor, with the count announced once, and leaves no transaction open", async () => {
    const version = await createModelVersion(database.pool);
    const reviewer = await createPerson(database.pool);
    const days = [1, 3, 5, 8, 11, 11, 12, 15, 19, 20, 25];
    for (const [index, day] of days.entries()) {
      const alert = await createAlert(database.pool, version.id, { occurredAt: at(`2026-01-${String(day).padStart(2, "0")}T${index % 2 ? "00" : "12"}:00:00Z`) });
      await createOutcome(database.pool, alert.id, reviewer, { outcome: index % 3 ? "legitimate" : "confirmed_fraud", closedAt: at("2026-01-21T00:00:00Z") });
    }
    // One exactly at the middle: it belongs to the second part, and to no part twice.
    const atMiddle = await createAlert(database.pool, version.id, { occurredAt: at("2026-01-11T03:00:00Z") });
    await createOutcome(database.pool, atMiddle.id, reviewer, { outcome: "legitimate", closedAt: at("2026-01-21T00:00:00Z") });
    const choices = labelExportChoicesSchema.parse({
      ...choicesFor(version.id, { occurredFrom: at("2026-01-01T00:00:00Z"), occurredTo: at("2026-02-01T00:00:00Z"), asOf: at("2026-01-21T06:00:00Z") }),
      maturityDays: 0,
    });
    const read = async (twoPartsFromRows: number) => {
      const rows: LabelExportRow[] = [];
      const counts: number[] = [];
      for await (const batch of streamLabelExportRows(database.pool, { choices, batchSize: 3, onCount: (n) => void counts.push(n), twoPartsFromRows })) rows.push(...batch);
      return { rows, counts };
    };
    const whole = await read(Number.MAX_SAFE_INTEGER);
    const halves = await read(1);
    // Rows on the 25th are after asOf's maturity cut-off: eleven rows.
    expect(whole.rows).toHaveLength(11);
    expect(halves.counts).toEqual([11]);
    expect(halves.rows).toEqual(whole.rows);
    // Both parts had rows: the 11th (at and after the middle) opens the second.
    const occurred = halves.rows.map((row) => row.occurred_at);
    expect(occurred.filter((instant) => instant < "2026-01-11T03:00:00.000Z").length).toBeGreaterThan(0);
    expect(occurred.filter((instant) => instant >= "2026-01-11T03:00:00.000Z").length).toBeGreaterThan(0);
    expect([...occurred].sort()).toEqual(occurred);

    // A reader that stops after the first batch: both connections go back clean.
    for await (const batch of streamLabelExportRows(database.pool, { choices, batchSize: 3, onCount: () => undefined, twoPartsFromRows: 1 })) {
      expect(batch).toHaveLength(3);
      break;
    }
    const { rows: open } = await database.pool.query<{ n: number }>(
      "SELECT count(*)::int AS n FROM pg_stat_activity WHERE datname = current_database() AND state LIKE 'idle in transaction%'",
    );
    expect(open[0].n).toBe(0);
  });
});
