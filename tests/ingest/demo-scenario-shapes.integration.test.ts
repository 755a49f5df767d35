// The demo loader sends the generated scenario through the same ingest functions as the API; every
// row it generates must be accepted as it is shaped (alerts with their own receivedAt, outcomes with
// optional second reviews, labels with references, one of them for an alert that never arrives).
import { describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { generateDemoScenario } from "@/demo-data/generate-scenario";
import { demoPeople } from "@/demo-data/people";
import { saveModelVersion } from "@/lib/model-versions/save-model-version";
import { ingestAlerts } from "@/lib/ingest/ingest-alerts";
import { ingestOutcomes } from "@/lib/ingest/ingest-outcomes";
import { ingestLabels } from "@/lib/ingest/ingest-labels";
import { systemActor } from "@/lib/auth/actor";

const database = await useTestDatabase();
const prisma = database.prisma;
const actor = systemActor("demo-loader");
const now = new Date("2026-12-01T12:00:00Z");

describe("the demo scenario's rows", () => {
  it("are all accepted, close their alerts and match their labels", async () => {
    const scenario = generateDemoScenario({ now, days: 12, alertsPerDay: 60 });
    for (const person of demoPeople) await prisma.user.create({ data: { email: person.email, displayName: person.displayName, role: person.role } });
    for (const input of scenario.modelVersions) await saveModelVersion(prisma, { actor, input });

    const alerts = await ingestAlerts(prisma, { actor, rows: scenario.alerts, channel: "demo", allowReceivedAt: true, now });
    expect(alerts).toMatchObject({ accepted: scenario.alerts.length, rejected: 0, conflict: 0 });
    const sample = scenario.alerts[5];
    expect((await prisma.alert.findFirstOrThrow({ where: { externalId: sample.externalId } })).receivedAt).toEqual(new Date(sample.receivedAt));

    const outcomes = await ingestOutcomes(prisma, { actor, rows: scenario.outcomes, channel: "demo", now });
    expect(outcomes).toMatchObject({ accepted: scenario.outcomes.length, rejected: 0, conflict: 0 });
    expect(await prisma.alert.count({ where: { state: "closed" } })).toBe(scenario.outcomes.length);
    const seconds = scenario.outcomes.filter((row) => row.secondOutcome).length;
    expect(await prisma.outcome.count({ where: { reviewRound: 2, origin: "imported" } })).toBe(seconds);

    const labels = await ingestLabels(prisma, { actor, rows: scenario.labels, channel: "demo", now });
    expect(labels).toMatchObject({ accepted: scenario.labels.length, rejected: 0, unmatched: 1, unmatchedLabels: [{ externalId: "lk-pending-000001" }] });

    // Loading the same scenario again adds nothing.
    const again = await ingestAlerts(prisma, { actor, rows: scenario.alerts, channel: "demo", allowReceivedAt: true, now });
    expect(again).toMatchObject({ accepted: 0, duplicate: scenario.alerts.length });
    expect(await ingestOutcomes(prisma, { actor, rows: scenario.outcomes, channel: "demo", now })).toMatchObject({ accepted: 0, duplicate: scenario.outcomes.length });
  }, 120_000);
});
