import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { ingestAlerts } from "@/lib/ingest/ingest-alerts";
import { ingestOutcomes } from "@/lib/ingest/ingest-outcomes";
import { alertRow, createUser, loader, nextExternalId, outcomeRow, registerModelVersions } from "@/tests/ingest/factories";

const database = await useTestDatabase();
const prisma = database.prisma;
const now = new Date("2026-12-01T12:00:00Z");
const ANA = "ana.reviewer@example.test";
const BRAM = "bram.second@example.test";

beforeAll(async () => {
  await registerModelVersions(prisma);
  await createUser(prisma, ANA);
  await createUser(prisma, BRAM, "supervisor");
});

async function ingestedAlerts(count: number): Promise<string[]> {
  const rows = Array.from({ length: count }, () => alertRow());
  await ingestAlerts(prisma, { actor: loader, rows, channel: "api", now });
  return rows.map((row) => row.externalId as string);
}

describe("back-fill of historical outcomes", () => {
  it("closes an alert with its imported outcome and handling time", async () => {
    const [externalId] = await ingestedAlerts(1);
    const answer = await ingestOutcomes(prisma, { actor: loader, rows: [outcomeRow({ externalId, reviewerEmail: "Ana.Reviewer@example.test" })], channel: "api", now });
    expect(answer).toMatchObject({ accepted: 1, duplicate: 0, conflict: 0, rejected: 0, outcomesRecorded: 1 });

    const alert = await prisma.alert.findFirstOrThrow({ where: { externalId }, include: { outcomes: { include: { reviewer: true } } } });
    expect(alert).toMatchObject({ state: "closed", finalOutcome: "confirmed_fraud", closedAt: new Date("2026-11-30T11:06:30Z"), claimedAt: new Date("2026-11-30T11:00:00Z") });
    expect(alert.assignedToId).toBe(alert.outcomes[0].reviewerId);
    expect(alert.outcomes).toHaveLength(1);
    // claimed 11:00:00, closed 11:06:30 → 390 seconds
    expect(alert.outcomes[0]).toMatchObject({ reviewRound: 1, origin: "imported", handlingSeconds: 390, reason: "Cardholder denies the transaction" });
    expect(alert.outcomes[0].reviewer.email).toBe(ANA);
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { action: "outcome.recorded", subjectId: alert.id } });
    expect(event.payload).toMatchObject({ externalId, outcome: "confirmed_fraud", round: 1, handlingSeconds: 390, origin: "imported", sentToSecondReview: false });
  });

  it("records a second review as round 2, and its outcome becomes the final one", async () => {
    const [externalId] = await ingestedAlerts(1);
    const row = outcomeRow({ externalId, outcome: "legitimate", reason: "Usual spending pattern", secondReviewerEmail: BRAM, secondOutcome: "confirmed_fraud" });
    const answer = await ingestOutcomes(prisma, { actor: loader, rows: [row], channel: "api", now });
    expect(answer).toMatchObject({ accepted: 1, outcomesRecorded: 2 });
    const alert = await prisma.alert.findFirstOrThrow({ where: { externalId }, include: { outcomes: { orderBy: { reviewRound: "asc" } } } });
    expect(alert.finalOutcome).toBe("confirmed_fraud");
    expect(alert.outcomes.map((outcome) => [outcome.reviewRound, outcome.outcome, outcome.origin])).toEqual([
      [1, "legitimate", "imported"],
      [2, "confirmed_fraud", "imported"],
    ]);
    // As on screen: the alert went back to the pool between the rounds, so no claim is left on it.
    expect(alert).toMatchObject({ assignedToId: null, claimedAt: null });
    const events = await prisma.auditEvent.findMany({ where: { subjectId: alert.id }, orderBy: { id: "asc" } });
    expect(events.map((event) => event.action)).toEqual(["outcome.recorded", "outcome.recorded", "second_review.overturned"]);
    expect(events.map((event) => (event.payload as { sentToSecondReview?: boolean }).sentToSecondReview)).toEqual([true, false, undefined]);
    expect(events[2].payload).toMatchObject({ firstOutcome: "legitimate", secondOutcome: "confirmed_fraud" });
  });

  it("is idempotent per alert: the same outcome again is a duplicate, another one a conflict", async () => {
    const [externalId] = await ingestedAlerts(1);
    const row = outcomeRow({ externalId });
    await ingestOutcomes(prisma, { actor: loader, rows: [row], channel: "api", now });
    const again = await ingestOutcomes(prisma, {
      actor: loader,
      rows: [row, { ...row, closedAt: "2026-11-30T12:06:30+01:00" }, { ...row, outcome: "legitimate", reason: "Usual spending pattern" }],
      channel: "api",
      now,
    });
    expect(again).toMatchObject({ accepted: 0, duplicate: 2, conflict: 1, rejected: 0 });
    expect(again.conflicts[0]).toMatchObject({ row: 2, path: "externalId", externalId });
    expect(await prisma.outcome.count({ where: { alert: { externalId } } })).toBe(1);
  });

  it("reports unknown alerts and unknown reviewers as row errors and closes the rest", async () => {
    const [known] = await ingestedAlerts(1);
    const rows = [
      outcomeRow({ externalId: known }),
      outcomeRow({ externalId: "never-ingested" }),
      outcomeRow({ reviewerEmail: "nobody@example.test" }),
      outcomeRow({ closedAt: "2026-11-30T10:00:00Z" }),
    ];
    const answer = await ingestOutcomes(prisma, { actor: loader, rows, channel: "upload", now });
    expect(answer).toMatchObject({ accepted: 1, rejected: 3 });
    expect(answer.errors.map((error) => [error.row, error.path])).toEqual([
      [3, "closedAt"],
      [1, "externalId"],
      [2, "reviewerEmail"],
      [2, "externalId"],
    ]);
    expect(answer.errors.find((error) => error.path === "reviewerEmail")?.message).toContain("nobody@example.test");
  });

  it("refuses to close an alert that someone is reviewing on the desk", async () => {
    const [externalId] = await ingestedAlerts(1);
    const ana = await prisma.user.findUniqueOrThrow({ where: { email: ANA } });
    await prisma.alert.updateMany({ where: { externalId }, data: { state: "in_review", assignedToId: ana.id, claimedAt: now, leaseExpiresAt: now } });
    const answer = await ingestOutcomes(prisma, { actor: loader, rows: [outcomeRow({ externalId })], channel: "api", now });
    expect(answer).toMatchObject({ accepted: 0, conflict: 1 });
    expect(answer.conflicts[0].message).toContain("in review");
  });

  it("closes nothing in atomic mode when one row fails", async () => {
    const [a, b] = await ingestedAlerts(2);
    const answer = await ingestOutcomes(prisma, { actor: loader, rows: [outcomeRow({ externalId: a }), outcomeRow({ externalId: b, outcome: "fraud" })], channel: "api", atomic: true, now });
    expect(answer).toMatchObject({ accepted: 0, rejected: 2, rolledBack: true });
    expect(await prisma.alert.count({ where: { externalId: { in: [a, b] }, state: "closed" } })).toBe(0);
  });

  // 2,000 rows by default so the suite stays quick; INGEST_BENCH_ROWS=20000 measures a demo-sized back-fill.
  const bulk = Number(process.env.INGEST_BENCH_ROWS ?? 2_000);
  it(`back-fills ${bulk.toLocaleString("en")} outcomes in one batch, with an audit event each`, async () => {
    const rows = Array.from({ length: bulk }, () => alertRow({ externalId: nextExternalId("hist") }));
    const alertsStarted = performance.now();
    await ingestAlerts(prisma, { actor: loader, rows, channel: "command_line", now });
    const alertSeconds = (performance.now() - alertsStarted) / 1000;
    // Every 50th row was double-reviewed: two outcomes and a second-review event.
    const outcomes = rows.map((row, index) =>
      index % 50 === 0
        ? outcomeRow({ externalId: row.externalId, outcome: "legitimate", reason: "Usual spending pattern", secondReviewerEmail: BRAM, secondOutcome: "legitimate" })
        : outcomeRow({ externalId: row.externalId }),
    );
    const doubled = Math.ceil(bulk / 50);
    const started = performance.now();
    const answer = await ingestOutcomes(prisma, { actor: loader, rows: outcomes, channel: "command_line", now });
    const seconds = (performance.now() - started) / 1000;
    console.info(`${bulk} alerts: ${alertSeconds.toFixed(2)} s; ${bulk} outcomes (${answer.outcomesRecorded + doubled} audit events): ${seconds.toFixed(2)} s`);
    expect(answer).toMatchObject({ accepted: bulk, rejected: 0, outcomesRecorded: bulk + doubled });
    expect(await prisma.auditEvent.count({ where: { action: "second_review.confirmed" } })).toBe(doubled);
  }, 1_800_000);
});
