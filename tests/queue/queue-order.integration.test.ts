// The queue's order end to end: raw alerts → risk fields (deriveRiskFields through the recompute) →
// the order in which "take next" hands them out and the queue lists them (DESIGN.md §4).
import { randomUUID } from "node:crypto";
import { beforeAll, beforeEach, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlert, createModelVersion, createUser, type TestModelVersion } from "@/tests/support/factories";
import { seededRandom } from "@/tests/risk/seeded-random";
import type { UserActor } from "@/lib/auth/actor";
import { compareQueueOrder, type QueueOrderEntry } from "@/lib/risk";
import { claimNextAlert } from "@/lib/queue/claim-next-alert";
import { listWaitingAlerts } from "@/lib/queue/list-waiting-alerts";
import { recomputeWaitingAlerts } from "@/lib/queue/recompute-waiting-alerts";
import { getSettings } from "@/lib/settings/get-settings";
import { updateSettings } from "@/lib/settings/update-settings";
import { defaultSettings, type Settings } from "@/lib/settings/schemas";

const database = await useTestDatabase();
const prisma = database.prisma;
const NOW = new Date("2026-12-02T12:00:00Z");
const hoursAgo = (hours: number) => new Date(NOW.getTime() - hours * 3_600_000);
const SYSTEM = { type: "system" as const, id: null, label: "test" };

let model: TestModelVersion;
let analyst: UserActor;

beforeAll(async () => {
  // β = 1: the model was trained without undersampling, so p = score before any calibration.
  model = await createModelVersion(prisma, { negativeSamplingRate: 1 });
  analyst = await createUser(prisma, { role: "analyst" });
});

beforeEach(async () => {
  await prisma.$executeRaw`DELETE FROM alerts`;
  await prisma.$executeRaw`DELETE FROM settings`;
  // Room to take every alert of an example in turn.
  await updateSettings(prisma, { actor: SYSTEM, key: "queue", value: { ...defaultSettings.queue, maxHeldPerAnalyst: 50 } });
});

async function setQueueSettings(change: Partial<Settings["queue"]>): Promise<void> {
  const current = await getSettings(prisma);
  await updateSettings(prisma, { actor: SYSTEM, key: "queue", value: { ...current.queue, ...change } });
}

async function deriveAll(): Promise<void> {
  const settings = await getSettings(prisma);
  await prisma.$transaction((tx) => recomputeWaitingAlerts(tx, { now: NOW, settings }));
}

async function takeAll(actor: UserActor): Promise<string[]> {
  const taken: string[] = [];
  for (;;) {
    const alert = await claimNextAlert(database, { actor, now: NOW });
    if (!alert) return taken;
    taken.push(alert.externalId);
  }
}

async function listedOrder(): Promise<string[]> {
  return (await listWaitingAlerts(prisma, { now: NOW, limit: 100 })).map((alert) => alert.externalId);
}

// Default cost settings: recovery r = 0.30 card_present, 0.10 card_not_present, 0.00 atm; fixed cost
// f = 15.00 (1,500 minor). Exposure E = amount·(1 − r) + f; expected loss EL = p·E with p = score.
// Default SLA bands: EL < 50.00 → 48 h, 50.00 ≤ EL < 500.00 → 24 h, EL ≥ 500.00 → 4 h.
const handWorked = [
  // A1: 1,200.00 card_not_present, p 0.30: E = 120,000·0.9 + 1,500 = 109,500; EL = 0.30·109,500 = 32,850
  { externalId: "A1", amountMinor: 120_000, channel: "card_not_present", score: 0.3, receivedHoursAgo: 2, exposure: 109_500, expectedLoss: 32_850 },
  // A2: 200.00 card_present, p 0.90: E = 20,000·0.7 + 1,500 = 15,500; EL = 0.90·15,500 = 13,950
  { externalId: "A2", amountMinor: 20_000, channel: "card_present", score: 0.9, receivedHoursAgo: 1, exposure: 15_500, expectedLoss: 13_950 },
  // A3: 4,000.00 atm, p 0.05: E = 400,000·1.0 + 1,500 = 401,500; EL = 0.05·401,500 = 20,075
  { externalId: "A3", amountMinor: 400_000, channel: "atm", score: 0.05, receivedHoursAgo: 3, exposure: 401_500, expectedLoss: 20_075 },
  // A4: 600.00 card_not_present, p 0.80: E = 60,000·0.9 + 1,500 = 55,500; EL = 0.80·55,500 = 44,400
  { externalId: "A4", amountMinor: 60_000, channel: "card_not_present", score: 0.8, receivedHoursAgo: 0.5, exposure: 55_500, expectedLoss: 44_400 },
  // A5: 50.00 card_present, p 0.95: E = 5,000·0.7 + 1,500 = 5,000; EL = 0.95·5,000 = 4,750 (below 50.00: 48 h band)
  { externalId: "A5", amountMinor: 5_000, channel: "card_present", score: 0.95, receivedHoursAgo: 2.5, exposure: 5_000, expectedLoss: 4_750 },
  // A6: 2,500.00 card_present, p 0.20: E = 250,000·0.7 + 1,500 = 176,500; EL = 0.20·176,500 = 35,300
  { externalId: "A6", amountMinor: 250_000, channel: "card_present", score: 0.2, receivedHoursAgo: 1.5, exposure: 176_500, expectedLoss: 35_300 },
  // A7: 80.00 atm, p 0.99: E = 8,000·1.0 + 1,500 = 9,500; EL = 0.99·9,500 = 9,405
  { externalId: "A7", amountMinor: 8_000, channel: "atm", score: 0.99, receivedHoursAgo: 1, exposure: 9_500, expectedLoss: 9_405 },
  // A8: the same transaction shape as A2 (EL 13,950) but two hours older: on a tie, older first.
  { externalId: "A8", amountMinor: 20_000, channel: "card_present", score: 0.9, receivedHoursAgo: 3, exposure: 15_500, expectedLoss: 13_950 },
];

async function createHandWorked(receivedHoursAgo: Record<string, number> = {}): Promise<void> {
  for (const alert of handWorked) {
    await createAlert(prisma, model.id, {
      externalId: alert.externalId,
      amountMinor: alert.amountMinor,
      channel: alert.channel,
      score: alert.score,
      receivedAt: hoursAgo(receivedHoursAgo[alert.externalId] ?? alert.receivedHoursAgo),
    });
  }
}

describe("queue order", () => {
  it("hands out the largest expected loss first, not the highest score", async () => {
    await createHandWorked();
    await deriveAll();

    const stored = await prisma.alert.findMany({ select: { externalId: true, exposureMinor: true, expectedLossMinor: true, probability: true, calibrated: true } });
    for (const alert of handWorked) {
      const row = stored.find((candidate) => candidate.externalId === alert.externalId)!;
      expect(Number(row.exposureMinor), `${alert.externalId} exposure`).toBe(alert.exposure);
      expect(Number(row.expectedLossMinor), `${alert.externalId} expected loss`).toBe(alert.expectedLoss);
      expect(row.probability).toBe(alert.score);
      expect(row.calibrated).toBe(false);
    }

    // EL: A4 44,400 > A6 35,300 > A1 32,850 > A3 20,075 > A8 13,950 (older) = A2 13,950 > A7 9,405 > A5 4,750.
    // (By score alone it would be A7, A5, A2/A8, A4, A1, A6, A3.)
    const expected = ["A4", "A6", "A1", "A3", "A8", "A2", "A7", "A5"];
    expect(await listedOrder()).toEqual(expected);
    expect(await takeAll(analyst)).toEqual(expected);
  });

  it("orders by expected loss per handling minute under Smith's rule", async () => {
    await setQueueSettings({ orderMode: "loss_per_minute", expectedHandlingMinutes: 6, handlingMinutesByChannel: { card_not_present: 12, atm: 4 } });
    await createHandWorked();
    await deriveAll();

    // priority = EL ÷ expected minutes (card_present 6, card_not_present 12, atm 4):
    //   A6 35,300 / 6  = 5,883.33    A3 20,075 / 4 = 5,018.75    A4 44,400 / 12 = 3,700
    //   A1 32,850 / 12 = 2,737.50    A7  9,405 / 4 = 2,351.25    A8 13,950 / 6  = 2,325 (older)
    //   A2 13,950 / 6  = 2,325       A5  4,750 / 6 =   791.67
    // The quick ATM alerts move up, the slow card-not-present ones down.
    const priorities = await prisma.alert.findMany({ select: { externalId: true, priority: true } });
    const priorityOf = (id: string) => priorities.find((row) => row.externalId === id)!.priority!;
    expect(priorityOf("A6")).toBeCloseTo(5_883.333, 3);
    expect(priorityOf("A3")).toBeCloseTo(5_018.75, 9);
    expect(priorityOf("A4")).toBeCloseTo(3_700, 9);
    expect(priorityOf("A7")).toBeCloseTo(2_351.25, 9);

    const expected = ["A6", "A3", "A4", "A1", "A7", "A8", "A2", "A5"];
    expect(await listedOrder()).toEqual(expected);
    expect(await takeAll(analyst)).toEqual(expected);
  });

  it("puts overdue alerts first, the overdue ones among themselves by expected loss", async () => {
    // A5 (EL 4,750: 48 h band) arrived 50 h ago: due 2 h ago. A7 (EL 9,405: 24 h band) arrived 30 h
    // ago: due 6 h ago. A3 (EL 20,075: 24 h band) arrived 23 h ago: due in 1 h, not overdue yet.
    await createHandWorked({ A5: 50, A7: 30, A3: 23 });
    await deriveAll();

    const listed = await listWaitingAlerts(prisma, { now: NOW, limit: 100 });
    expect(listed.filter((alert) => alert.overdue).map((alert) => alert.externalId)).toEqual(["A7", "A5"]);
    expect(listed.find((alert) => alert.externalId === "A5")!.dueAt).toEqual(hoursAgo(2));

    const expected = ["A7", "A5", "A4", "A6", "A1", "A3", "A8", "A2"];
    expect(listed.map((alert) => alert.externalId)).toEqual(expected);
    expect(await takeAll(analyst)).toEqual(expected);
  });

  it("an alert that falls due while it waits moves to the front at the next claim", async () => {
    await createHandWorked({ A5: 47 }); // due in 1 h
    await deriveAll();
    expect((await claimNextAlert(database, { actor: analyst, now: NOW }))!.externalId).toBe("A4");
    const later = new Date(NOW.getTime() + 61 * 60_000);
    expect((await claimNextAlert(database, { actor: analyst, now: later }))!.externalId).toBe("A5");
  });

  it("matches lib/risk's compareQueueOrder on random alerts with ties", async () => {
    const random = seededRandom(20261202);
    const entries: QueueOrderEntry[] = [];
    for (let i = 0; i < 200; i++) {
      // Few distinct values, so that priority and arrival ties are common and the id decides.
      const priority = Math.floor(random() * 8) * 1_000 + (random() < 0.5 ? 0.25 : 0);
      const arrivedAt = hoursAgo(Math.floor(random() * 5));
      // Due between 2 h ago and 2 h ahead; due exactly now counts as overdue.
      const dueAt = new Date(NOW.getTime() + Math.round((random() - 0.5) * 4) * 3_600_000);
      entries.push({ id: randomUUID(), dueAt, arrivedAt, priority });
    }
    await prisma.$executeRaw`
      INSERT INTO alerts (id, external_id, content_hash, received_at, occurred_at, amount_minor, currency, channel,
                          merchant_category_code, merchant_country, entity_ref, model_version_id, score,
                          probability, probability_source, exposure_minor, expected_loss_minor, due_at, priority)
      SELECT e.id, 'r-' || e.id, 'h', e.received_at, e.received_at, 1000, 'EUR', 'card_present', '5411', 'DE', 'card',
             ${model.id}::uuid, 0.5, 0.5, 'corrected_score', 1000, 500, e.due_at, e.priority
        FROM unnest(${entries.map((e) => e.id)}::uuid[], ${entries.map((e) => e.arrivedAt.toISOString())}::timestamptz[],
                    ${entries.map((e) => e.dueAt.toISOString())}::timestamptz[], ${entries.map((e) => e.priority)}::float8[])
             AS e(id, received_at, due_at, priority)`;
    const expected = [...entries].sort((a, b) => compareQueueOrder(a, b, NOW)).map((entry) => entry.id);

    const listed = await listWaitingAlerts(prisma, { now: NOW, limit: 500 });
    expect(listed.map((alert) => alert.id)).toEqual(expected);

    // Take-next hands them out in the same order (seven analysts in turn, to stay under the hold limit).
    const analysts = await Promise.all(Array.from({ length: 7 }, () => createUser(prisma)));
    const taken: string[] = [];
    for (let i = 0; i < entries.length; i++) {
      taken.push((await claimNextAlert(database, { actor: analysts[i % analysts.length], now: NOW }))!.id);
    }
    expect(taken).toEqual(expected);
    expect(await claimNextAlert(database, { actor: analyst, now: NOW })).toBeNull();
  });

  it("a queue or cost settings change re-derives waiting alerts at once", async () => {
    await createHandWorked();
    await deriveAll();
    const { changeSettings } = await import("@/lib/settings/change-settings");
    const supervisor = await createUser(prisma, { role: "supervisor" });
    const current = await getSettings(prisma);
    const result = await changeSettings(prisma, {
      actor: supervisor,
      key: "queue",
      value: { ...current.queue, orderMode: "loss_per_minute", handlingMinutesByChannel: { card_not_present: 12, atm: 4 } },
      now: NOW,
    });
    expect(result.recomputedAlerts).toBe(handWorked.length);
    expect(await listedOrder()).toEqual(["A6", "A3", "A4", "A1", "A7", "A8", "A2", "A5"]);
    const audit = await prisma.auditEvent.findFirst({ where: { action: "settings.changed", actorId: supervisor.id } });
    expect(audit?.subjectId).toBe("queue");

    // Costs are an admin's: A3's ATM recovery going from 0% to 50% halves most of its exposure:
    // E = 400,000·0.5 + 1,500 = 201,500; EL = 0.05·201,500 = 10,075.
    await expect(
      changeSettings(prisma, { actor: supervisor, key: "costs", value: current.costs, now: NOW }),
    ).rejects.toMatchObject({ code: "forbidden" });
    const admin = await createUser(prisma, { role: "admin" });
    await changeSettings(prisma, {
      actor: admin,
      key: "costs",
      value: { ...current.costs, recoveryRateByChannel: { ...current.costs.recoveryRateByChannel, atm: 0.5 } },
      now: NOW,
    });
    const a3 = await prisma.alert.findFirstOrThrow({ where: { externalId: "A3" } });
    expect(Number(a3.exposureMinor)).toBe(201_500);
    expect(Number(a3.expectedLossMinor)).toBe(10_075);
  });
});
