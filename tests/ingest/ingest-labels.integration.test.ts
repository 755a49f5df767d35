import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { ingestAlerts } from "@/lib/ingest/ingest-alerts";
import { ingestLabels } from "@/lib/ingest/ingest-labels";
import { alertRow, labelRow, loader, registerModelVersions } from "@/tests/ingest/factories";

const database = await useTestDatabase();
const prisma = database.prisma;
const now = new Date("2026-12-01T12:00:00Z");

beforeAll(async () => {
  await registerModelVersions(prisma);
});

describe("ingest of late labels", () => {
  it("attaches a label to its alert and records who sent it", async () => {
    const alert = alertRow();
    await ingestAlerts(prisma, { actor: loader, rows: [alert], channel: "api", now });
    const answer = await ingestLabels(prisma, { actor: loader, rows: [labelRow({ externalId: alert.externalId })], channel: "api", now });
    expect(answer).toMatchObject({ accepted: 1, duplicate: 0, conflict: 0, rejected: 0, unmatched: 0 });

    const stored = await prisma.label.findFirstOrThrow({ where: { alertExternalId: alert.externalId as string }, include: { alert: true } });
    expect(stored).toMatchObject({ label: "fraud", source: "chargeback", ingestBatchId: answer.batchId, receivedAt: now });
    expect(stored.alert?.externalId).toBe(alert.externalId);
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { action: "label.received", subjectId: stored.alertId! } });
    expect(event.payload).toEqual({ externalId: alert.externalId, label: "fraud", source: "chargeback", matched: true });
  });

  it("keeps a label for an alert that has not arrived, reports it, and matches it when the alert comes", async () => {
    const early = labelRow({ externalId: "txn-later-0001", reference: "CB-77" });
    const answer = await ingestLabels(prisma, { actor: loader, rows: [labelRow(), early], channel: "api", now });
    expect(answer).toMatchObject({ accepted: 2, unmatched: 2 });
    expect(answer.unmatchedLabels).toContainEqual({ row: 1, externalId: "txn-later-0001" });
    expect(await prisma.label.findFirstOrThrow({ where: { alertExternalId: "txn-later-0001" } })).toMatchObject({ alertId: null });

    const alerts = await ingestAlerts(prisma, { actor: loader, rows: [alertRow({ externalId: "txn-later-0001" })], channel: "api", now });
    expect(alerts.labelsMatched).toBe(1);
    const matched = await prisma.label.findFirstOrThrow({ where: { alertExternalId: "txn-later-0001" }, include: { alert: true } });
    expect(matched.alert?.ingestBatchId).toBe(alerts.batchId);
  });

  it("is idempotent per alert, source and reference", async () => {
    const alert = alertRow();
    await ingestAlerts(prisma, { actor: loader, rows: [alert], channel: "api", now });
    const chargeback = labelRow({ externalId: alert.externalId, reference: "CB-1" });
    const report = labelRow({ externalId: alert.externalId, source: "customer_report", reference: "CB-1" });
    expect(await ingestLabels(prisma, { actor: loader, rows: [chargeback, report], channel: "api", now })).toMatchObject({ accepted: 2 });

    const again = await ingestLabels(prisma, {
      actor: loader,
      rows: [chargeback, { ...chargeback, observedAt: "2026-12-01T10:00:00+01:00" }, { ...chargeback, label: "genuine" }, { ...report, reference: null }],
      channel: "api",
      now,
    });
    // The second row is the same instant written with another offset: a duplicate too.
    expect(again).toMatchObject({ accepted: 1, duplicate: 2, conflict: 1, rejected: 0 });
    expect(again.conflicts[0]).toMatchObject({ row: 2, path: "externalId" });
    expect(await prisma.label.count({ where: { alertExternalId: alert.externalId as string } })).toBe(3);
    // Without a reference the key is (alert, source, "") and repeats are duplicates as well.
    expect(await ingestLabels(prisma, { actor: loader, rows: [{ ...report, reference: null }], channel: "api", now })).toMatchObject({ duplicate: 1 });
  });

  it("rejects invalid labels by row and field, and all of them in atomic mode", async () => {
    const rows = [labelRow(), labelRow({ label: "maybe" }), labelRow({ source: "analyst" })];
    const partial = await ingestLabels(prisma, { actor: loader, rows, channel: "upload", now });
    expect(partial).toMatchObject({ accepted: 1, rejected: 2 });
    expect(partial.errors.map((error) => [error.row, error.path])).toEqual([
      [1, "label"],
      [2, "source"],
    ]);

    const fresh = [labelRow(), labelRow({ observedAt: "yesterday" })];
    const atomic = await ingestLabels(prisma, { actor: loader, rows: fresh, channel: "upload", atomic: true, now });
    expect(atomic).toMatchObject({ accepted: 0, rejected: 2, rolledBack: true });
    expect(await prisma.label.count({ where: { alertExternalId: fresh[0].externalId as string } })).toBe(0);
  });

  it("accepts the demo scenario's label shape", async () => {
    const demo = { externalId: "lk-pending-000001", label: "fraud", source: "chargeback", observedAt: "2026-12-01T10:00:00.000Z", reference: "CB-PENDING-1" };
    expect(await ingestLabels(prisma, { actor: loader, rows: [demo], channel: "demo", now })).toMatchObject({ accepted: 1, unmatched: 1 });
  });
});
