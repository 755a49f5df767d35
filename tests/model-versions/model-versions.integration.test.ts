import { describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { AppError } from "@/lib/errors";
import { saveModelVersion } from "@/lib/model-versions/save-model-version";
import { listModelVersions } from "@/lib/model-versions/list-model-versions";
import { findModelVersionByName } from "@/lib/model-versions/find-model-version-by-name";
import { ingestAlerts } from "@/lib/ingest/ingest-alerts";
import { alertRow, createUser, loader } from "@/tests/ingest/factories";

const database = await useTestDatabase();
const prisma = database.prisma;
const champion = { modelName: "card-risk-gbm", version: "5.1.0", scoreKind: "probability", negativeSamplingRate: 0.02, alertThreshold: 0.5 };

describe("the model-version registry", () => {
  it("creates a version, then updates it, auditing what changed each time", async () => {
    const admin = await createUser(prisma, "ines.admin@example.test", "admin");
    const created = await saveModelVersion(prisma, { actor: admin, input: champion });
    expect(created.created).toBe(true);
    expect(created.modelVersion).toMatchObject({ ...champion, priorHitRate: null, active: true, calibratedAt: null });

    const updated = await saveModelVersion(prisma, { actor: admin, input: { ...champion, alertThreshold: 0.6, active: false } });
    expect(updated).toMatchObject({ created: false, changes: { alertThreshold: { from: 0.5, to: 0.6 }, active: { from: true, to: false } } });
    expect(updated.modelVersion.id).toBe(created.modelVersion.id);

    const unchanged = await saveModelVersion(prisma, { actor: admin, input: { ...champion, alertThreshold: 0.6, active: false } });
    expect(unchanged.changes).toEqual({});
    const events = await prisma.auditEvent.findMany({ where: { action: "model_version.saved", subjectId: created.modelVersion.id }, orderBy: { id: "asc" } });
    expect(events.map((event) => event.actorLabel)).toEqual(["ines.admin@example.test", "ines.admin@example.test"]);
    expect(events[1].payload).toMatchObject({ modelName: "card-risk-gbm", version: "5.1.0", changes: { alertThreshold: { from: 0.5, to: 0.6 } } });

    expect(await findModelVersionByName(prisma, { modelName: "card-risk-gbm", version: "5.1.0" })).toMatchObject({ alertThreshold: 0.6, active: false });
    expect(await findModelVersionByName(prisma, { modelName: "card-risk-gbm", version: "0.0.1" })).toBeNull();
  });

  it("lets only admins (and the system) change the registry", async () => {
    const supervisor = await createUser(prisma, "sam.supervisor@example.test", "supervisor");
    await expect(saveModelVersion(prisma, { actor: supervisor, input: { ...champion, version: "6.0.0" } })).rejects.toMatchObject({ code: "forbidden" });
    const client = { type: "api_client" as const, id: "00000000-0000-4000-8000-000000000001", name: "scorer", scopes: ["alerts:write" as const] };
    await expect(saveModelVersion(prisma, { actor: client, input: { ...champion, version: "6.0.0" } })).rejects.toBeInstanceOf(AppError);
    expect(await findModelVersionByName(prisma, { modelName: "card-risk-gbm", version: "6.0.0" })).toBeNull();
  });

  it("names invalid fields, such as an anomaly detector without a prior hit rate", async () => {
    const error = await saveModelVersion(prisma, { actor: loader, input: { modelName: "spend-ae", version: "2.0.3", scoreKind: "anomaly", alertThreshold: 4 } }).catch((caught) => caught);
    expect(error).toMatchObject({ code: "invalid_input", issues: [expect.objectContaining({ path: "priorHitRate" })] });
  });

  it("refuses to change the score kind of a version that already has alerts", async () => {
    await saveModelVersion(prisma, { actor: loader, input: { modelName: "txn-classifier", version: "3.1.0", scoreKind: "probability", alertThreshold: 0.5 } });
    await ingestAlerts(prisma, { actor: loader, rows: [alertRow()], channel: "api", now: new Date("2026-12-01T12:00:00Z") });
    await expect(
      saveModelVersion(prisma, { actor: loader, input: { modelName: "txn-classifier", version: "3.1.0", scoreKind: "anomaly", priorHitRate: 0.1, alertThreshold: 4 } }),
    ).rejects.toMatchObject({ code: "conflict" });
  });

  it("lists every version with its calibration state, or only the active ones", async () => {
    const all = await listModelVersions(prisma);
    expect(all.map((version) => `${version.modelName} ${version.version}`)).toEqual(["card-risk-gbm 5.1.0", "txn-classifier 3.1.0"]);
    expect(all[1]).toMatchObject({ scoreKind: "probability", calibratedAt: null, calibrationLabelCount: null });
    const active = await listModelVersions(prisma, { activeOnly: true });
    expect(active.map((version) => version.modelName)).toEqual(["txn-classifier"]);
  });
});

describe("changing what an uncalibrated version's probability comes from", () => {
  // Undersampling correction p = β·s / (β·s − s + 1): Dal Pozzolo, Caelen, Johnson, Bontempi 2015,
  // "Calibrating Probability with Undersampling for Unbalanced Classification" (as DESIGN.md cites it).
  // s = 0.5: β = 0.1 gives 0.05 / 0.55 = 1/11, β = 0.5 gives 0.25 / 0.75 = 1/3.
  const now = new Date("2026-12-01T12:00:00Z");

  it("re-derives the version's waiting alerts when β changes, so the queue order follows the new probability", async () => {
    const admin = await createUser(prisma, "rui.admin@example.test", "admin");
    const sampled = { modelName: "sampled-gbm", version: "1.0.0", scoreKind: "probability", negativeSamplingRate: 0.1, alertThreshold: 0.3 };
    await saveModelVersion(prisma, { actor: admin, input: sampled });
    await saveModelVersion(prisma, { actor: admin, input: { modelName: "plain-gbm", version: "1.0.0", scoreKind: "probability", alertThreshold: 0.1 } });
    const fromSampled = alertRow({ modelName: "sampled-gbm", modelVersion: "1.0.0", score: 0.5 });
    const fromPlain = alertRow({ modelName: "plain-gbm", modelVersion: "1.0.0", score: 0.2 });
    await ingestAlerts(prisma, { actor: loader, rows: [fromSampled, fromPlain], channel: "api", now });
    const read = async (externalId: unknown) =>
      prisma.alert.findFirstOrThrow({ where: { externalId: String(externalId) }, select: { probability: true, priority: true } });

    // Same amount: the plain version's 0.2 outranks the sampled version's 0.5 corrected to 1/11.
    const before = await read(fromSampled.externalId);
    expect(before.probability).toBeCloseTo(1 / 11, 9);
    expect(before.priority!).toBeLessThan((await read(fromPlain.externalId)).priority!);

    const saved = await saveModelVersion(prisma, { actor: admin, input: { ...sampled, negativeSamplingRate: 0.5 }, now });
    expect(saved).toMatchObject({ changes: { negativeSamplingRate: { from: 0.1, to: 0.5 } }, recomputedAlerts: 1 });
    const after = await read(fromSampled.externalId);
    expect(after.probability).toBeCloseTo(1 / 3, 9);
    expect(after.priority!).toBeGreaterThan((await read(fromPlain.externalId)).priority!);

    const [event] = await prisma.auditEvent.findMany({ where: { action: "model_version.saved", subjectId: saved.modelVersion.id }, orderBy: { id: "desc" }, take: 1 });
    expect(event.payload).toMatchObject({ changes: { negativeSamplingRate: { from: 0.1, to: 0.5 } }, recomputedAlerts: 1 });
  });

  it("leaves the queue alone when only the threshold or the active flag changes", async () => {
    const admin = await createUser(prisma, "lia.admin@example.test", "admin");
    const saved = await saveModelVersion(prisma, { actor: admin, input: { modelName: "sampled-gbm", version: "1.0.0", scoreKind: "probability", negativeSamplingRate: 0.5, alertThreshold: 0.4 } });
    expect(saved).toMatchObject({ changes: { alertThreshold: { from: 0.3, to: 0.4 } }, recomputedAlerts: 0 });
  });
});
