// The capacity planner over the database: binning in PostgreSQL, the version's calibration, below-the-
// line weights and the capacity from staffing. Traffic is laid out so the answers are closed forms.
//
// Now: 2026-12-02 12:00 UTC; window: the 14 days before. One probability-score model version with
// β = 1 and no calibration map, so p = score (the undersampling correction with β = 1 is the identity).
// 1,400 alerts spread evenly over the 14 days (100 a day) with scores evenly spaced over [0.5, 1):
// s_i = 0.5 + 0.5 · (i + 0.5)/1,400, exposure 10,000 each. Scores are binned 200 ways (7 alerts a bin).
//
// K = 50 a day = 700 alerts over the window = the top 100 bins exactly, so no bin is cut:
//   threshold ≈ 0.75; precision = mean of the top half of the scores = 0.5 + 0.5 · 0.75 = 0.875;
//   EL caught = 50 · 0.875 · 10,000 = 437,500 a day. All exposures are equal: score order = EL order.
import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createModelVersion, type TestModelVersion } from "@/tests/support/factories";
import { planCapacity } from "@/lib/workload/plan-capacity";
import { capacityQuerySchema } from "@/lib/workload/schemas";

const database = await useTestDatabase();
const prisma = database.prisma;
const NOW = new Date("2026-12-02T12:00:00Z");
const FROM = new Date(NOW.getTime() - 14 * 86_400_000);

let model: TestModelVersion;

/** `count` alerts spread evenly over the window, scores evenly spaced over [low, high). */
async function spread(options: { prefix: string; count: number; low: number; high: number; exposure: number; inclusionProbability?: number }) {
  const { prefix, count, low, high, exposure } = options;
  const pi = options.inclusionProbability ?? null;
  await prisma.$executeRaw`
    INSERT INTO alerts (external_id, content_hash, received_at, occurred_at, amount_minor, currency, channel, merchant_category_code,
                        merchant_country, entity_ref, model_version_id, score, below_the_line, inclusion_probability,
                        exposure_minor, expected_loss_minor, state, closed_at, final_outcome)
    SELECT ${prefix} || '-' || g, 'test', ${FROM}::timestamptz + (g + 0.5) * (interval '14 days' / ${count}::int),
           ${FROM}::timestamptz, ${exposure}::bigint, 'EUR', 'card_present', '5411', 'DE', 'card-' || g, ${model.id}::uuid,
           ${low}::float8 + (${high}::float8 - ${low}::float8) * (g + 0.5) / ${count}::int, ${pi !== null}, ${pi}::float8,
           ${exposure}::bigint, 0, 'closed', ${NOW}, 'legitimate'
      FROM generate_series(0, ${count}::int - 1) AS g`;
}

const query = (raw: Record<string, string>) => capacityQuerySchema.parse(raw);

beforeAll(async () => {
  model = await createModelVersion(prisma, { modelName: "card-risk-plan", version: "1.0.0", alertThreshold: 0.5 });
  await spread({ prefix: "alert", count: 1_400, low: 0.5, high: 1, exposure: 10_000 });
});

describe("the threshold for K alerts a day", () => {
  it("matches the closed form on evenly spread traffic", async () => {
    const answer = await planCapacity(prisma, { query: query({ capacity: "50" }), now: NOW });
    expect(answer.capacity).toEqual({ perDay: 50, source: "given", staffing: null });
    const [version] = answer.modelVersions;
    expect(version).toMatchObject({ modelName: "card-risk-plan", currentThreshold: 0.5, calibration: { source: "corrected_score", scoreRange: null } });
    expect(version.observed).toMatchObject({ days: 14, alerts: 1_400, belowTheLineSamples: 0, alertsPerDay: 100, currencies: ["EUR"], withoutExposure: 0 });
    expect(version.queuePerDay).toBeCloseTo(100, 9);
    expect(Math.abs((version.threshold.threshold ?? 0) - 0.75)).toBeLessThan(0.0025); // within one bin (0.0025 wide)
    expect(version.threshold.alertsPerDayAtThreshold).toBeCloseTo(50, 9);
    expect(version.threshold.precision).toBeCloseTo(0.875, 9);
    expect(version.threshold.expectedLossCaughtPerDayMinor).toBeCloseTo(437_500, 3);
    expect(version.threshold.reachesBelowCurrentAlerts).toBe(false);
    expect(version.queueByExpectedLoss.expectedLossCaughtPerDayMinor).toBeCloseTo(version.queueByScore.expectedLossCaughtPerDayMinor, 3);
  });

  it("uses the version's current calibration map, not the probabilities stored on the alerts", async () => {
    // Map: p = 0.1 at s = 0.5 rising linearly to 0.6 at s = 1, i.e. p = s − 0.4 on the alerted range.
    // Top half (s ≥ 0.75, mean s 0.875): precision 0.475; EL caught = 50 · 0.475 · 10,000 = 237,500 a day.
    await prisma.calibrationMap.create({
      data: { modelVersionId: model.id, fittedAt: new Date(NOW.getTime() - 3_600_000), labelCount: 400, positiveCount: 60, brierScore: 0.1, scorePoints: [0.5, 1], probabilityPoints: [0.1, 0.6] },
    });
    const [version] = (await planCapacity(prisma, { query: query({ capacity: "50" }), now: NOW })).modelVersions;
    expect(version.calibration).toMatchObject({ source: "calibration_map", labelCount: 400, scoreRange: [0.5, 1] });
    expect(version.threshold.precision).toBeCloseTo(0.475, 9);
    expect(version.threshold.expectedLossCaughtPerDayMinor).toBeCloseTo(237_500, 3);
    expect(version.threshold.inCalibratedRange).toBe(true);
  });
});

describe("below the current threshold", () => {
  it("sees the traffic under the line through samples weighted 1/π, and says the map has no labels there", async () => {
    // 140 samples over 14 days (10 a day), scores evenly over [0, 0.5), π = 0.1: they stand for 100 a day.
    // K = 150 a day: the 100 alerts plus the top 50 of the 100 a day under the line: threshold ≈ 0.25.
    // With the map of the previous test (p = s − 0.4 on [0.5, 1], held at 0.1 below s = 0.5):
    //   alerts: mean p = 0.75 − 0.4 = 0.35 → 35 frauds a day; the 50 under the line at p = 0.1 → 5 a day;
    //   precision = 40 / 150 ≈ 0.2667. The threshold is below the map's lowest labelled score (0.5).
    await spread({ prefix: "sample", count: 140, low: 0, high: 0.5, exposure: 10_000, inclusionProbability: 0.1 });
    const [version] = (await planCapacity(prisma, { query: query({ capacity: "150" }), now: NOW })).modelVersions;
    expect(version.observed).toMatchObject({ alerts: 1_400, belowTheLineSamples: 140, alertsPerDay: 100 });
    expect(version.observed.trafficPerDay).toBeCloseTo(200, 6);
    expect(version.queuePerDay).toBeCloseTo(100, 9);
    expect(Math.abs((version.threshold.threshold ?? 0) - 0.25)).toBeLessThan(0.01); // samples are binned 140 ways: 0.0036 wide
    expect(version.threshold.reachesBelowCurrentAlerts).toBe(true);
    expect(version.threshold.inCalibratedRange).toBe(false);
    expect(version.threshold.precision).toBeCloseTo(40 / 150, 6);
    // The queue holds only 100 a day: at K = 150 every alert is reviewed, whatever the order.
    expect(version.queueByScore).toMatchObject({ capacityExceedsPool: true });
    expect(version.queueByScore.reviewedPerDay).toBeCloseTo(100, 9);
    expect(version.orderingGainPerDayMinor).toBeCloseTo(0, 3);
  });
});

describe("capacity from staffing and settings", () => {
  it("is analysts × hours × 60 ÷ handling minutes, or the daily capacity setting", async () => {
    // 5 analysts × 7.5 h × 60 ÷ 6 min (the default expected handling minutes) = 375 a day.
    const staffed = await planCapacity(prisma, { query: query({ analysts: "5", hours: "7.5" }), now: NOW });
    expect(staffed.capacity).toEqual({ perDay: 375, source: "staffing", staffing: { analysts: 5, hoursPerAnalyst: 7.5, handlingMinutes: 6 } });
    // 4 × 8 × 60 ÷ 9.5 = 202.1 → 202.
    expect((await planCapacity(prisma, { query: query({ analysts: "4", hours: "8", handlingMinutes: "9.5" }), now: NOW })).capacity.perDay).toBe(202);
    // Neither: the metrics setting dailyCapacity (300 by default).
    expect((await planCapacity(prisma, { query: query({}), now: NOW })).capacity).toEqual({ perDay: 300, source: "setting", staffing: null });
  });

  it("rejects a capacity given both ways, or analysts without hours", () => {
    expect(capacityQuerySchema.safeParse({ capacity: "10", analysts: "2", hours: "8" }).success).toBe(false);
    const missingHours = capacityQuerySchema.safeParse({ analysts: "2" });
    expect(missingHours.success).toBe(false);
    expect(missingHours.error?.issues[0].path).toEqual(["hours"]);
    expect(capacityQuerySchema.safeParse({ capacity: "0" }).success).toBe(false);
  });

  it("leaves out model versions without traffic in the window", async () => {
    await createModelVersion(prisma, { modelName: "card-risk-idle", version: "0.1.0" });
    const answer = await planCapacity(prisma, { query: query({ capacity: "50" }), now: NOW });
    expect(answer.modelVersions.map((version) => version.modelName)).toEqual(["card-risk-plan"]);
    expect(answer.assumptions.length).toBeGreaterThan(3);
    expect(answer.window).toEqual({ from: FROM, to: NOW, days: 14 });
  });

  it("counts alerts without an exposure but leaves them out of the plan", async () => {
    const before = (await planCapacity(prisma, { query: query({ capacity: "50" }), now: NOW })).modelVersions[0];
    await prisma.$executeRaw`
      INSERT INTO alerts (external_id, content_hash, received_at, occurred_at, amount_minor, currency, channel, merchant_category_code,
                          merchant_country, entity_ref, model_version_id, score)
      VALUES ('unpriced', 'test', ${new Date(NOW.getTime() - 3_600_000)}, ${new Date(NOW.getTime() - 3_600_000)}, 5000, 'EUR', 'card_present',
              '5411', 'DE', 'card-x', ${model.id}::uuid, 0.99)`;
    const after = (await planCapacity(prisma, { query: query({ capacity: "50" }), now: NOW })).modelVersions[0];
    expect(after.observed).toMatchObject({ alerts: before.observed.alerts + 1, withoutExposure: 1 });
    expect(after.queuePerDay).toBeCloseTo(before.queuePerDay, 9);
    expect(after.threshold.expectedLossCaughtPerDayMinor).toBeCloseTo(before.threshold.expectedLossCaughtPerDayMinor, 6);
  });
});
