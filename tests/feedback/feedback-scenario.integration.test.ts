// The feedback loop on a scenario small enough to work by hand: two model versions, two reviewers,
// 22 alerts in the week of Monday 2026-07-06 (plus four earlier ones for drift and one the week
// after), three late labels that overturn an analyst and one that resolves an inconclusive alert,
// four second reviews. Every count, rate, kappa and calibration number below is worked out in the
// comments; only the Wilson bounds are taken from lib/metrics (tested against Newcombe 1998 there).
//
// The scenario comes in through the real ingest path (alerts, historical outcomes with second
// reviews, late labels) and every number is read back through GET /api/v1/metrics/model-versions and
// GET /api/v1/metrics/reviewers, called as Next calls them. The screens render the same answers.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { NextRequest } from "next/server";
import { useTestDatabase } from "@/tests/support/test-database";
import { makeUser } from "@/tests/auth/factories";
import { createApiClient } from "@/lib/api-clients/create-api-client";
import { createSession } from "@/lib/auth/create-session";
import { SESSION_COOKIE } from "@/lib/auth/session-cookie";
import { averagePrecision, brierScore, expectedCalibrationError, populationStabilityIndex, rate, reliabilityTable, rocAuc } from "@/lib/metrics";
import { getModelVersionMetrics } from "@/lib/feedback/get-model-version-metrics";
import { parseModelVersionMetricsQuery } from "@/lib/feedback/parse-metrics-query";
import { modelVersionMetricsAnswerSchema, reviewerMetricsAnswerSchema, type ModelVersionMetricsAnswer, type ReviewerMetricsAnswer } from "@/lib/feedback/schemas";
import { loadScenarioThroughIngest, type LoadedScenario, type Scenario } from "@/tests/feedback/scenario-loader";

const database = await useTestDatabase();
const prisma = database.prisma;
// The routes use the app's database handle; point it at this file's database before first use.
process.env.DATABASE_URL = database.url;
delete (globalThis as { triageDesk?: unknown }).triageDesk;
const modelVersionsRoute = await import("@/app/api/v1/metrics/model-versions/route");
const reviewersRoute = await import("@/app/api/v1/metrics/reviewers/route");

afterAll(async () => {
  const handles = (globalThis as { triageDesk?: { prisma: { $disconnect(): Promise<void> }; pool: { end(): Promise<void> } } }).triageDesk;
  if (handles) {
    await handles.prisma.$disconnect();
    await handles.pool.end();
  }
});

/** Ingest time of the scenario: after every receivedAt, so back-filled arrival times are accepted. */
const ingestedAt = new Date("2026-12-01T12:00:00Z");
const DAY_MS = 86_400_000;

const d1 = (minute: number) => `2026-07-06T09:${String(minute).padStart(2, "0")}:00Z`;
const d2 = (minute: number) => `2026-07-07T09:${String(minute).padStart(2, "0")}:00Z`;

// Scores are probabilities with β = 1, so p = score exactly; every alert is 100.00 EUR card-not-present,
// so exposure is the same and the queue priority (expected loss) orders alerts by p.
//
// ref  version  day  p     first review (who, outcome, s)   second review       late label            ground truth
// a01  champ    1    0.92  A confirmed_fraud 300                                                       1
// a02  champ    1    0.85  A confirmed_fraud 420                                                       1
// a03  champ    1    0.74  B legitimate      400                                  chargeback fraud      1  (false clear by B)
// a04  champ    1    0.66  A legitimate      240                                                       0
// a05  champ    1    0.35  B legitimate      250                                                       0
// a06  champ    1    0.18  A inconclusive    600                                                       ?  (counted apart)
// a07  champ    2    0.88  B confirmed_fraud 310                                                       1
// a08  champ    2    0.57  A legitimate      360              B legitimate 120                         0
// a09  champ    2    0.45  B confirmed_fraud 290              A confirmed_fraud 90                     1
// a10  champ    2    0.27  A legitimate      180                                  customer_report fraud 1  (false clear by A)
// a11  champ    2    0.12  B inconclusive    700                                  chargeback fraud      1  (label resolves it)
// a12  champ    2    0.95  — still waiting                                                             ?  (open)
// s1   champ    1    0.03  A legitimate      150   below the line, π = 0.10                            0
// s2   champ    2    0.04  B confirmed_fraud 340   below the line, π = 0.05                            1
// b01  chall    1    0.81  A confirmed_fraud 480                                                       1
// b02  chall    1    0.62  B legitimate      380              A confirmed_fraud 150                    1  (final outcome from the second review)
// b03  chall    1    0.40  A legitimate      540                                                       0
// b04  chall    1    0.23  B legitimate      220                                                       0
// b05  chall    2    0.77  A confirmed_fraud 200                                  customer_report genuine 0 (overturned)
// b06  chall    2    0.52  B confirmed_fraud 260              A confirmed_fraud 100                    1
// b07  chall    2    0.31  A legitimate      330                                                       0
// b08  chall    2    0.09  B legitimate      500                                                       0
// r1…r4 champ, 2026-06-29…07-02, waiting, p 0.20 0.50 0.70 0.90: the drift reference week.
// a13  champ, 2026-07-13 (the next week), A confirmed_fraud: outside every window below.
const scenario: Scenario = {
  amountMinor: 10_000,
  versions: {
    champ: { modelName: "card-gbm", version: "4.2.0", alertThreshold: 0.05 },
    chall: { modelName: "card-gbm", version: "4.3.0-rc1", alertThreshold: 0.05 },
  },
  reviewers: {
    A: { email: "ada.ferrand@example.test", displayName: "Ada Ferrand", role: "analyst" },
    B: { email: "ben.holloway@example.test", displayName: "Ben Holloway", role: "analyst" },
  },
  alerts: [
    { ref: "a01", version: "champ", receivedAt: d1(1), score: 0.92, first: { by: "A", outcome: "confirmed_fraud", handlingSeconds: 300 } },
    { ref: "a02", version: "champ", receivedAt: d1(2), score: 0.85, first: { by: "A", outcome: "confirmed_fraud", handlingSeconds: 420 } },
    {
      ref: "a03", version: "champ", receivedAt: d1(3), score: 0.74, first: { by: "B", outcome: "legitimate", handlingSeconds: 400 },
      label: { label: "fraud", source: "chargeback", observedAt: "2026-08-14T00:00:00Z" },
    },
    { ref: "a04", version: "champ", receivedAt: d1(4), score: 0.66, first: { by: "A", outcome: "legitimate", handlingSeconds: 240 } },
    { ref: "a05", version: "champ", receivedAt: d1(5), score: 0.35, first: { by: "B", outcome: "legitimate", handlingSeconds: 250 } },
    { ref: "a06", version: "champ", receivedAt: d1(6), score: 0.18, first: { by: "A", outcome: "inconclusive", handlingSeconds: 600 } },
    { ref: "a07", version: "champ", receivedAt: d2(1), score: 0.88, first: { by: "B", outcome: "confirmed_fraud", handlingSeconds: 310 } },
    {
      ref: "a08", version: "champ", receivedAt: d2(2), score: 0.57, first: { by: "A", outcome: "legitimate", handlingSeconds: 360 },
      second: { by: "B", outcome: "legitimate", handlingSeconds: 120 },
    },
    {
      ref: "a09", version: "champ", receivedAt: d2(3), score: 0.45, first: { by: "B", outcome: "confirmed_fraud", handlingSeconds: 290 },
      second: { by: "A", outcome: "confirmed_fraud", handlingSeconds: 90 },
    },
    {
      ref: "a10", version: "champ", receivedAt: d2(4), score: 0.27, first: { by: "A", outcome: "legitimate", handlingSeconds: 180 },
      label: { label: "fraud", source: "customer_report", observedAt: "2026-07-30T00:00:00Z" },
    },
    {
      ref: "a11", version: "champ", receivedAt: d2(5), score: 0.12, first: { by: "B", outcome: "inconclusive", handlingSeconds: 700 },
      label: { label: "fraud", source: "chargeback", observedAt: "2026-09-02T00:00:00Z" },
    },
    { ref: "a12", version: "champ", receivedAt: d2(6), score: 0.95 },
    { ref: "s1", version: "champ", receivedAt: d1(7), score: 0.03, belowTheLine: 0.1, first: { by: "A", outcome: "legitimate", handlingSeconds: 150 } },
    { ref: "s2", version: "champ", receivedAt: d2(7), score: 0.04, belowTheLine: 0.05, first: { by: "B", outcome: "confirmed_fraud", handlingSeconds: 340 } },
    { ref: "b01", version: "chall", receivedAt: d1(11), score: 0.81, first: { by: "A", outcome: "confirmed_fraud", handlingSeconds: 480 } },
    {
      ref: "b02", version: "chall", receivedAt: d1(12), score: 0.62, first: { by: "B", outcome: "legitimate", handlingSeconds: 380 },
      second: { by: "A", outcome: "confirmed_fraud", handlingSeconds: 150 },
    },
    { ref: "b03", version: "chall", receivedAt: d1(13), score: 0.4, first: { by: "A", outcome: "legitimate", handlingSeconds: 540 } },
    { ref: "b04", version: "chall", receivedAt: d1(14), score: 0.23, first: { by: "B", outcome: "legitimate", handlingSeconds: 220 } },
    {
      ref: "b05", version: "chall", receivedAt: d2(11), score: 0.77, first: { by: "A", outcome: "confirmed_fraud", handlingSeconds: 200 },
      label: { label: "genuine", source: "customer_report", observedAt: "2026-07-20T00:00:00Z" },
    },
    {
      ref: "b06", version: "chall", receivedAt: d2(12), score: 0.52, first: { by: "B", outcome: "confirmed_fraud", handlingSeconds: 260 },
      second: { by: "A", outcome: "confirmed_fraud", handlingSeconds: 100 },
    },
    { ref: "b07", version: "chall", receivedAt: d2(13), score: 0.31, first: { by: "A", outcome: "legitimate", handlingSeconds: 330 } },
    { ref: "b08", version: "chall", receivedAt: d2(14), score: 0.09, first: { by: "B", outcome: "legitimate", handlingSeconds: 500 } },
    { ref: "r1", version: "champ", receivedAt: "2026-06-29T10:00:00Z", score: 0.2 },
    { ref: "r2", version: "champ", receivedAt: "2026-06-30T10:00:00Z", score: 0.5 },
    { ref: "r3", version: "champ", receivedAt: "2026-07-01T10:00:00Z", score: 0.7 },
    { ref: "r4", version: "champ", receivedAt: "2026-07-02T10:00:00Z", score: 0.9 },
    { ref: "a13", version: "champ", receivedAt: "2026-07-13T09:00:00Z", score: 0.93, first: { by: "A", outcome: "confirmed_fraud", handlingSeconds: 100 } },
  ],
};

let loaded: LoadedScenario;
const credentials = { reporting: "", scorer: "", analyst: "", supervisor: "", auditor: "" };

// k = 2 alerts a day, so precision at k can be worked by hand.
beforeAll(async () => {
  loaded = await loadScenarioThroughIngest(prisma, scenario, ingestedAt);
  await prisma.setting.create({ data: { key: "metrics", value: { labelMaturityDays: 120, dailyCapacity: 2 } } });
  const admin = await makeUser(prisma, { role: "admin" });
  credentials.reporting = (await createApiClient(prisma, { actor: admin.actor, name: "reporting", scopes: ["metrics:read"] })).token;
  credentials.scorer = (await createApiClient(prisma, { actor: admin.actor, name: "scorer", scopes: ["alerts:write"] })).token;
  for (const role of ["analyst", "supervisor", "auditor"] as const) {
    const person = await makeUser(prisma, { role });
    credentials[role] = (await createSession(prisma, { userId: person.id, now: new Date() })).token;
  }
});

const request = (path: string, headers: Record<string, string>) =>
  new NextRequest(`http://desk.test${path}`, { method: "GET", headers: { host: "desk.test", "x-forwarded-for": "192.0.2.7", ...headers } });
const noParams = () => ({ params: Promise.resolve({}) as Promise<never> });
const asToken = (token: string) => ({ authorization: `Bearer ${token}` });
const asPerson = (token: string) => ({ cookie: `${SESSION_COOKIE}=${token}` });

/** A refused or failed call, with the status and the error body's code and issues. */
class ApiFailure extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    readonly issues: { path: string; message: string }[] = [],
  ) {
    super(`HTTP ${status} ${code}`);
  }
}

async function bodyOf(response: Response): Promise<unknown> {
  const body = await response.json();
  if (response.status !== 200) throw new ApiFailure(response.status, body.error.code, body.error.issues);
  return body;
}

async function modelHealth(query: string, headers: Record<string, string> = asToken(credentials.reporting)): Promise<ModelVersionMetricsAnswer> {
  const response = await modelVersionsRoute.GET(request(`/api/v1/metrics/model-versions?${query}`, headers), noParams());
  return modelVersionMetricsAnswerSchema.parse(await bodyOf(response));
}

async function reviewerQuality(query: string, headers: Record<string, string> = asPerson(credentials.supervisor)): Promise<ReviewerMetricsAnswer> {
  const response = await reviewersRoute.GET(request(`/api/v1/metrics/reviewers?${query}`, headers), noParams());
  return reviewerMetricsAnswerSchema.parse(await bodyOf(response));
}

/** The answer without what depends on the instant of the request. */
const timeless = (answer: ModelVersionMetricsAnswer) => ({ ...answer, generatedAt: null, window: { ...answer.window, matureBefore: null } });

const weekQuery = "window=week&date=2026-07-08&driftCurrentDays=7&driftReferenceDays=7";

describe("model health over the week of 2026-07-06", () => {
  it("resolves the ISO week and marks it mature: it ended more than the 120-day maturity ago", async () => {
    const { window, generatedAt } = await modelHealth(weekQuery);
    // 2026-07-08 is a Wednesday; its ISO week runs Monday 07-06 to Sunday 07-12, end exclusive 07-13.
    // matureBefore = now − 120 days, which is after 07-13 from 2026-11-10 on.
    expect(window).toEqual({
      kind: "week",
      from: "2026-07-06T00:00:00.000Z",
      to: "2026-07-13T00:00:00.000Z",
      days: 7,
      bucket: "day",
      labelMaturityDays: 120,
      matureBefore: new Date(new Date(generatedAt).getTime() - 120 * DAY_MS).toISOString(),
      mature: true,
    });
  });

  it("counts received and closed alerts, the outcome mix and labels that overturned an analyst", async () => {
    const { modelVersions } = await modelHealth(weekQuery);
    expect(modelVersions.map((m) => `${m.modelVersion.modelName} ${m.modelVersion.version}`)).toEqual(["card-gbm 4.2.0", "card-gbm 4.3.0-rc1"]);
    const [champ, chall] = modelVersions;
    // Champion: a01–a12 received (s1, s2 are below-the-line samples, a13 is next week, r1–r4 the week
    // before) = 12; closed a01–a11 = 11. Final outcomes: fraud a01 a02 a07 a09 = 4; legitimate a03 a04
    // a05 a08 a10 = 5; inconclusive a06 a11 = 2. Overturned: a03 and a10 (legitimate, then fraud) = 2.
    expect(champ).toMatchObject({ received: 12, closed: 11, outcomeMix: { confirmedFraud: 4, legitimate: 5, inconclusive: 2 }, overturnedByLabel: 2 });
    // Challenger: b01–b08 received and closed. Final: fraud b01 b02 (second review) b05 b06 = 4,
    // legitimate b03 b04 b07 b08 = 4. Overturned: b05 (fraud, then a genuine customer report) = 1.
    expect(chall).toMatchObject({ received: 8, closed: 8, outcomeMix: { confirmedFraud: 4, legitimate: 4, inconclusive: 0 }, overturnedByLabel: 1 });
  });

  it("computes realized precision on the ground truth, with inconclusive counted apart", async () => {
    const [champ, chall] = (await modelHealth(weekQuery)).modelVersions;
    // Champion truth of the 11 closed: 1 for a01 a02 a03 a07 a09 a10 a11 (F = 7), 0 for a04 a05 a08
    // (L = 3), unknown a06 → 7 / 10 = 0.7, one inconclusive.
    expect(champ.realizedPrecision).toEqual({ ...rate(7, 10), inconclusive: 1 });
    // Challenger truth: 1 for b01 b02 b06 (F = 3), 0 for b03 b04 b05 b07 b08 (L = 5) → 3 / 8 = 0.375.
    expect(chall.realizedPrecision).toEqual({ ...rate(3, 8), inconclusive: 0 });
    expect(champ.realizedPrecision.value).toBe(0.7);
  });

  it("draws the precision series per day, empty days included, each day marked mature", async () => {
    const [champ, chall] = (await modelHealth(weekQuery)).modelVersions;
    expect(champ.series).toHaveLength(7);
    // Day 1 (07-06): a01–a06 received and closed; F a01 a02 a03 = 3, L a04 a05 = 2, a06 apart → 3/5.
    expect(champ.series[0]).toMatchObject({ from: "2026-07-06T00:00:00.000Z", to: "2026-07-07T00:00:00.000Z", mature: true, received: 6, closed: 6 });
    expect(champ.series[0].realizedPrecision).toEqual({ ...rate(3, 5), inconclusive: 1 });
    // Day 2 (07-07): a07–a12 received, a12 open → closed 5; F a07 a09 a10 a11 = 4, L a08 = 1 → 4/5.
    expect(champ.series[1]).toMatchObject({ received: 6, closed: 5 });
    expect(champ.series[1].realizedPrecision).toEqual({ ...rate(4, 5), inconclusive: 0 });
    // Wednesday to Sunday: nothing received, the rate has no value and the interval is all of [0, 1].
    expect(champ.series[2]).toMatchObject({ received: 0, closed: 0, realizedPrecision: { value: null, lower: 0, upper: 1, trials: 0 } });
    // Challenger day 1: F b01 b02, L b03 b04 → 2/4; day 2: F b06, L b05 b07 b08 → 1/4.
    expect(chall.series[0].realizedPrecision).toEqual({ ...rate(2, 4), inconclusive: 0 });
    expect(chall.series[1].realizedPrecision).toEqual({ ...rate(1, 4), inconclusive: 0 });
  });

  it("reports calibration: the reliability table, Brier score and the binned ECE", async () => {
    const [champ, chall] = (await modelHealth(weekQuery)).modelVersions;
    // Champion, the 10 closed alerts with a ground truth (p → y):
    // .92→1 .85→1 .74→1 .66→0 .35→0 .88→1 .57→0 .45→1 .27→1 .12→1.
    // Bins (lower, upper]: (.1,.2] .12→1 | (.2,.3] .27→1 | (.3,.4] .35→0 | (.4,.5] .45→1 | (.5,.6] .57→0 |
    // (.6,.7] .66→0 | (.7,.8] .74→1 | (.8,.9] .85 .88 → 1 1 (mean p .865) | (.9,1] .92→1; (0,.1] empty.
    expect(champ.calibration).toMatchObject({ alerts: 10, calibratedAlerts: 0 });
    expect(champ.calibration.bins.map((bin) => bin.n)).toEqual([0, 1, 1, 1, 1, 1, 1, 1, 2, 1]);
    expect(champ.calibration.bins[8].meanPredicted).toBeCloseTo(0.865, 12);
    expect(champ.calibration.bins[8].observedRate).toBe(1);
    expect(champ.calibration.bins[0]).toEqual({ lower: 0, upper: 0.1, n: 0, meanPredicted: null, observedRate: null });
    // ECE = (1/10)(.88 + .73 + .35 + .55 + .57 + .66 + .26 + 2·.135 + .08) = 4.35 / 10 = 0.435.
    expect(champ.calibration.expectedCalibrationError).toBeCloseTo(0.435, 12);
    // Brier = (1/10)(.0064 + .0225 + .0676 + .4356 + .1225 + .0144 + .3249 + .3025 + .5329 + .7744)
    //       = 2.6037 / 10 = 0.26037.
    expect(champ.calibration.brierScore).toBeCloseTo(0.26037, 12);

    // Challenger, 8 alerts: .81→1 .62→1 .40→0 .23→0 .77→0 .52→1 .31→0 .09→0.
    // Bins: (0,.1] .09→0 | (.2,.3] .23→0 | (.3,.4] .31 .40 → 0 0 (0.4 sits on the edge and belongs to
    // the lower bin) | (.5,.6] .52→1 | (.6,.7] .62→1 | (.7,.8] .77→0 | (.8,.9] .81→1.
    expect(chall.calibration.bins.map((bin) => bin.n)).toEqual([1, 0, 1, 2, 0, 1, 1, 1, 1, 0]);
    // ECE = (1/8)(.09 + .23 + 2·.355 + .48 + .38 + .77 + .19) = 2.85 / 8 = 0.35625.
    expect(chall.calibration.expectedCalibrationError).toBeCloseTo(0.35625, 12);
    // Brier = (1/8)(.0361 + .1444 + .16 + .0529 + .5929 + .2304 + .0961 + .0081) = 1.3209 / 8 = 0.1651125.
    expect(chall.calibration.brierScore).toBeCloseTo(0.1651125, 12);

    // The same numbers as lib/metrics computes from the raw arrays.
    const p = [0.92, 0.85, 0.74, 0.66, 0.35, 0.88, 0.57, 0.45, 0.27, 0.12];
    const y = [1, 1, 1, 0, 0, 1, 0, 1, 1, 1];
    expect(champ.calibration.brierScore).toBeCloseTo(brierScore(p, y)!, 12);
    expect(champ.calibration.expectedCalibrationError).toBeCloseTo(expectedCalibrationError(p, y)!, 12);
    expect(champ.calibration.bins.map((bin) => bin.n)).toEqual(reliabilityTable(p, y).map((bin) => bin.n));
  });

  it("measures ROC AUC and average precision on reviewed alerts only, and says so", async () => {
    const [champ, chall] = (await modelHealth(weekQuery)).modelVersions;
    // Champion: positives .92 .88 .85 .74 .45 .27 .12 (7), negatives .66 .57 .35 (3). Pairs won:
    // .92 .88 .85 .74 beat all three (12), .45 beats .35 (1), .27 and .12 none → AUC = 13/21.
    // AP: ranked .92 .88 .85 .74 | .66 .57 | .45 | .35 | .27 .12; precision at each fraud:
    // 1, 1, 1, 1, 5/7, 6/9, 7/10 → AP = (4 + 5/7 + 2/3 + 7/10) / 7.
    expect(champ.discrimination).toMatchObject({ measuredOnReviewedAlertsOnly: true, positives: 7, negatives: 3, sample: { used: 10, total: 10, sampled: false } });
    expect(champ.discrimination.rocAuc).toBeCloseTo(13 / 21, 12);
    expect(champ.discrimination.averagePrecision).toBeCloseTo((4 + 5 / 7 + 2 / 3 + 7 / 10) / 7, 12);
    // Challenger: positives .81 .62 .52, negatives .77 .40 .31 .23 .09. .81 beats 5, .62 and .52 beat
    // 4 each → 13/15. AP: .81(1) .77(0) .62(1) .52(1) → (1 + 2/3 + 3/4) / 3.
    expect(chall.discrimination.rocAuc).toBeCloseTo(13 / 15, 12);
    expect(chall.discrimination.averagePrecision).toBeCloseTo((1 + 2 / 3 + 3 / 4) / 3, 12);
    expect(champ.discrimination.rocAuc).toBeCloseTo(rocAuc([0.92, 0.88, 0.85, 0.74, 0.45, 0.27, 0.12, 0.66, 0.57, 0.35], [1, 1, 1, 1, 1, 1, 1, 0, 0, 0])!, 12);
    expect(chall.discrimination.averagePrecision).toBeCloseTo(averagePrecision([0.81, 0.77, 0.62, 0.52, 0.4, 0.31, 0.23, 0.09], [1, 0, 1, 1, 0, 0, 0, 0])!, 12);
  });

  it("measures score drift against the reference window given in the query", async () => {
    const [champ, chall] = (await modelHealth(weekQuery)).modelVersions;
    // driftCurrentDays=7: current = [07-06, 07-13), the 12 alerted champion scores a01–a12.
    // driftReferenceDays=7: reference = [06-29, 07-06), r1–r4 (0.2, 0.5, 0.7, 0.9).
    expect(champ.drift.reference).toEqual({ from: "2026-06-29T00:00:00.000Z", to: "2026-07-06T00:00:00.000Z", sample: { used: 4, total: 4, sampled: false } });
    expect(champ.drift.current).toEqual({ from: "2026-07-06T00:00:00.000Z", to: "2026-07-13T00:00:00.000Z", sample: { used: 12, total: 12, sampled: false } });
    const current = [0.92, 0.85, 0.74, 0.66, 0.35, 0.18, 0.88, 0.57, 0.45, 0.27, 0.12, 0.95];
    const expected = populationStabilityIndex([0.2, 0.5, 0.7, 0.9], current);
    expect(champ.drift.psi).toBeCloseTo(expected.psi, 12);
    expect(champ.drift).toMatchObject({ level: expected.level, watchLine: 0.1, actLine: 0.25 });
    // Twelve scores in seven days are far from 500 a day, so the series steps by week: one bucket of
    // 12 scores, too few for a PSI of its own (500 are needed); the whole-window PSI above stands.
    expect(champ.drift.step).toBe("week");
    expect(champ.drift.series).toEqual([{ from: "2026-07-06T00:00:00.000Z", to: "2026-07-13T00:00:00.000Z", mature: true, scores: 12, psi: null }]);
    // The challenger has no alerts before 07-06: no reference, no PSI.
    expect(chall.drift).toMatchObject({ psi: null, level: null, bins: [] });
  });

  it("computes precision at k per day among the k highest-priority alerts, open ones counting as not fraud", async () => {
    const [champ, chall] = (await modelHealth(weekQuery)).modelVersions;
    // k = 2. Champion day 1: a01 (.92) and a02 (.85), both fraud → 2/2. Day 2: a12 (.95, still open:
    // no ground truth, counts as not fraud) and a07 (.88, fraud) → 1/2, one of two resolved.
    expect(champ.precisionAtK.k).toBe(2);
    expect(champ.precisionAtK.days[0]).toMatchObject({ considered: 2, resolved: 2, precision: rate(2, 2) });
    expect(champ.precisionAtK.days[1]).toMatchObject({ considered: 2, resolved: 1, precision: rate(1, 2) });
    expect(champ.precisionAtK.days[2]).toMatchObject({ considered: 0, precision: { value: null } });
    expect(champ.precisionAtK.overall).toEqual(rate(3, 4));
    // Challenger day 1: b01 (.81) and b02 (.62), both fraud → 2/2; day 2: b05 (.77, genuine after
    // the customer report) and b06 (.52, fraud) → 1/2. Pooled 3/4.
    expect(chall.precisionAtK.days.slice(0, 2).map((day) => day.precision.successes)).toEqual([2, 1]);
    expect(chall.precisionAtK.overall).toEqual(rate(3, 4));
  });

  it("keeps below-the-line samples apart and weights them by 1/π", async () => {
    const [champ, chall] = (await modelHealth(weekQuery)).modelVersions;
    // s1 (π = 0.10, legitimate) stands for 10 transactions, s2 (π = 0.05, fraud) for 20: 30 in all.
    // Weighted fraud share below the line = 20 / 30. Unweighted: 1 of 2.
    expect(champ.belowTheLine).toMatchObject({ sampled: 2, resolved: 2, sampleFraudRate: rate(1, 2) });
    expect(champ.belowTheLine.represents).toBeCloseTo(30, 9);
    expect(champ.belowTheLine.weightedFraudRate.value).toBeCloseTo(20 / 30, 12);
    // Over alerted plus below-the-line traffic: (7 alerted fraud + 20) / (10 resolved alerted + 30) = 27/40.
    expect(champ.belowTheLine.weightedPopulationFraudRate).toMatchObject({ alerts: 12 });
    expect(champ.belowTheLine.weightedPopulationFraudRate.value).toBeCloseTo(27 / 40, 12);
    expect(chall.belowTheLine).toMatchObject({ sampled: 0, resolved: 0, represents: 0, weightedFraudRate: { value: null } });
  });

  it("shows only the versions asked for, in the order asked (challenger first here)", async () => {
    const { modelVersions } = await modelHealth(`${weekQuery}&modelVersionId=${loaded.versionIds.chall}&modelVersionId=${loaded.versionIds.champ}`);
    expect(modelVersions.map((m) => m.modelVersion.version)).toEqual(["4.3.0-rc1", "4.2.0"]);
    await expect(modelHealth(`${weekQuery}&modelVersionId=00000000-0000-4000-8000-000000000000`)).rejects.toMatchObject({ status: 404, code: "not_found" });
  });

  it("answers a reporting token and anyone signed in alike, and refuses a token without metrics:read", async () => {
    const byToken = await modelHealth(weekQuery);
    const byAnalyst = await modelHealth(weekQuery, asPerson(credentials.analyst));
    expect(timeless(byAnalyst)).toEqual(timeless(byToken));
    await expect(modelHealth(weekQuery, asToken(credentials.scorer))).rejects.toMatchObject({ status: 403 });
    await expect(modelHealth(weekQuery, {})).rejects.toMatchObject({ status: 401 });
  });

  it("names the query parameter that is wrong", async () => {
    await expect(modelHealth("window=fortnight")).rejects.toMatchObject({ status: 400, code: "invalid_input", issues: [{ path: "window" }] });
    await expect(modelHealth("driftReferenceDays=0")).rejects.toMatchObject({ issues: [{ path: "driftReferenceDays" }] });
  });

  it("gives the screen the same numbers as the API, through the same lib function", async () => {
    // With the clock of the request, the lib function the Model health page calls answers the same.
    const viaApi = await modelHealth(weekQuery);
    const direct = await getModelVersionMetrics(prisma, { query: parseModelVersionMetricsQuery(new URLSearchParams(weekQuery)), now: new Date(viaApi.generatedAt) });
    expect(modelVersionMetricsAnswerSchema.parse(direct)).toEqual(viaApi);
  });
});

describe("label maturity", () => {
  it("marks a recent day immature, and in a long window only the buckets that ended before the cut-off as mature", async () => {
    const recent = new Date(Date.now() - 2 * DAY_MS).toISOString().slice(0, 10);
    expect((await modelHealth(`window=day&date=${recent}`)).window.mature).toBe(false);
    // A window of 35 days in 5 weekly buckets whose fourth bucket ends 1 day before the cut-off
    // (now − 120 days): the first four are mature, the fifth is not, and neither is the window.
    const cutOff = new Date(Date.now() - 120 * DAY_MS);
    const firstDay = new Date(Date.UTC(cutOff.getUTCFullYear(), cutOff.getUTCMonth(), cutOff.getUTCDate()) - 29 * DAY_MS);
    const lastDay = new Date(firstDay.getTime() + 34 * DAY_MS);
    const day = (date: Date) => date.toISOString().slice(0, 10);
    const { window, modelVersions } = await modelHealth(`from=${day(firstDay)}&to=${day(lastDay)}&bucket=week`);
    expect(window).toMatchObject({ kind: "custom", days: 35, bucket: "week", mature: false });
    expect(modelVersions[0].series.map((point) => point.mature)).toEqual([true, true, true, true, false]);
  });

  it("keeps a long window's first weekly bucket identical to the scenario's week", async () => {
    const { modelVersions } = await modelHealth("from=2026-07-06&to=2026-08-09&bucket=week");
    // The first week holds everything of the scenario's week: same counts as above.
    expect(modelVersions[0].series[0].realizedPrecision).toEqual({ ...rate(7, 10), inconclusive: 1 });
  });

  it("marks the reviewer window the same way", async () => {
    expect((await reviewerQuality(`window=week&date=${new Date().toISOString().slice(0, 10)}`)).window.mature).toBe(false);
    expect((await reviewerQuality("window=week&date=2026-07-06")).window.mature).toBe(true);
  });
});

describe("reviewer quality over the week of 2026-07-06", () => {
  it("counts first reviews, outcome mix and hit rate per reviewer and for the team", async () => {
    const { team, reviewers } = await reviewerQuality("window=week&date=2026-07-06");
    expect(reviewers.map((r) => r.reviewer.displayName)).toEqual(["Ada Ferrand", "Ben Holloway"]);
    const [a, b] = reviewers;
    // A's first reviews: a01 a02 a04 a06 a08 a10 b01 b03 b05 b07 s1 = 11 (a13 is next week).
    // Fraud a01 a02 b01 b05 = 4; legitimate a04 a08 a10 b03 b07 s1 = 6; inconclusive a06 = 1 → 4/10.
    expect(a).toMatchObject({ closed: 11, outcomeMix: { confirmedFraud: 4, legitimate: 6, inconclusive: 1 } });
    expect(a.hitRate).toEqual({ ...rate(4, 10), inconclusive: 1 });
    // B's: a03 a05 a07 a09 a11 b02 b04 b06 b08 s2 = 10. Fraud a07 a09 b06 s2 = 4; legitimate a03 a05
    // b02 b04 b08 = 5 (b02 is B's own first outcome, though the second review turned it); a11 → 4/9.
    expect(b).toMatchObject({ closed: 10, outcomeMix: { confirmedFraud: 4, legitimate: 5, inconclusive: 1 } });
    expect(b.hitRate).toEqual({ ...rate(4, 9), inconclusive: 1 });
    // Team: 21 first reviews, 8 fraud, 11 legitimate, 2 inconclusive → 8/19.
    expect(team).toMatchObject({ closed: 21, outcomeMix: { confirmedFraud: 8, legitimate: 11, inconclusive: 2 } });
    expect(team.hitRate).toEqual({ ...rate(8, 19), inconclusive: 2 });
  });

  it("adjusts the hit rate for case mix: observed fraud over the sum of p", async () => {
    const { team, reviewers } = await reviewerQuality("window=week&date=2026-07-06");
    const [a, b] = reviewers;
    // A: Σp = .92 + .85 + .66 + .18 + .57 + .27 + .81 + .40 + .77 + .31 + .03 = 5.77 → 4 / 5.77.
    expect(a.observedOverExpected).toMatchObject({ observedFraud: 4, alertsWithProbability: 11, calibratedAlerts: 0 });
    expect(a.observedOverExpected.expectedFraud).toBeCloseTo(5.77, 12);
    expect(a.observedOverExpected.value).toBeCloseTo(4 / 5.77, 12);
    // B: Σp = .74 + .35 + .88 + .45 + .12 + .62 + .23 + .52 + .09 + .04 = 4.04 → 4 / 4.04.
    expect(b.observedOverExpected.expectedFraud).toBeCloseTo(4.04, 12);
    expect(b.observedOverExpected.value).toBeCloseTo(4 / 4.04, 12);
    // Team: 8 / 9.81.
    expect(team.observedOverExpected.value).toBeCloseTo(8 / 9.81, 12);
  });

  it("finds false clears from late chargebacks and customer reports", async () => {
    const { team, reviewers } = await reviewerQuality("window=week&date=2026-07-06");
    const [a, b] = reviewers;
    // A cleared 6; a10 came back as a customer-reported fraud → 1/6. B cleared 5; a03 came back as a
    // chargeback → 1/5. (a11 was inconclusive, not cleared, so its chargeback is no false clear.)
    expect(a.falseClearRate).toEqual(rate(1, 6));
    expect(b.falseClearRate).toEqual(rate(1, 5));
    expect(team.falseClearRate).toEqual(rate(2, 11));
  });

  it("takes the median handling time in SQL", async () => {
    const { team, reviewers } = await reviewerQuality("window=week&date=2026-07-06");
    // A sorted: 150 180 200 240 300 [330] 360 420 480 540 600 → 330 s.
    // B sorted: 220 250 260 290 [310 340] 380 400 500 700 → (310 + 340) / 2 = 325 s.
    // Team, 21 values: the 11th is 330 s.
    expect(reviewers.map((r) => r.medianHandlingSeconds)).toEqual([330, 325]);
    expect(team.medianHandlingSeconds).toBe(330);
  });

  it("measures agreement with second reviewers by Cohen's kappa", async () => {
    const { team, reviewers } = await reviewerQuality("window=week&date=2026-07-06");
    const [a, b] = reviewers;
    // A as first reviewer: one pair, a08 (legitimate, legitimate). p_o = 1 and p_e = 1·1 = 1: kappa is
    // 0/0, undefined → null; agreement 1/1.
    expect(a.agreement).toEqual({ kappa: null, agreementRate: rate(1, 1), pairs: [{ first: "legitimate", second: "legitimate", n: 1 }] });
    // B: a09 (F, F), b02 (L, F), b06 (F, F). p_o = 2/3. First marginals F 2/3, L 1/3; second F 3/3.
    // p_e = 2/3·1 + 1/3·0 = 2/3 → kappa = (2/3 − 2/3) / (1/3) = 0.
    expect(b.agreement.kappa).toBeCloseTo(0, 12);
    expect(b.agreement.agreementRate).toEqual(rate(2, 3));
    expect(b.agreement.pairs).toEqual([
      { first: "confirmed_fraud", second: "confirmed_fraud", n: 2 },
      { first: "legitimate", second: "confirmed_fraud", n: 1 },
    ]);
    // Team: the four pairs; p_o = 3/4; first F 2/4, L 2/4; second F 3/4, L 1/4;
    // p_e = .5·.75 + .5·.25 = .5 → kappa = (.75 − .5) / .5 = 0.5.
    expect(team.agreement.kappa).toBeCloseTo(0.5, 12);
    expect(team.agreement.agreementRate).toEqual(rate(3, 4));
    // Second reviews done: A on a09 b02 b06 = 3, B on a08 = 1.
    expect(reviewers.map((r) => r.secondReviews)).toEqual([3, 1]);
    expect(team.secondReviews).toBe(4);
  });

  it("lets nobody stand out on a dozen alerts: every interval holds the team's rate", async () => {
    const { team, reviewers } = await reviewerQuality("window=week&date=2026-07-06");
    // Team hit rate 8/19 ≈ 0.421; A's 4/10 has Wilson [0.168, 0.687], B's 4/9 [0.189, 0.733].
    expect(team.hitRate.value).toBeCloseTo(8 / 19, 12);
    expect(reviewers[0].hitRate.lower).toBeLessThan(team.hitRate.value!);
    expect(reviewers[0].hitRate.upper).toBeGreaterThan(team.hitRate.value!);
    for (const reviewer of reviewers) expect(reviewer.standsOut).toEqual({ hitRate: null, falseClearRate: null, agreementRate: null });
  });

  it("shows names to supervisors and auditors, pseudonyms only to a reporting token, nothing to analysts", async () => {
    const bySupervisor = await reviewerQuality("window=week&date=2026-07-06");
    const byAuditor = await reviewerQuality("window=week&date=2026-07-06", asPerson(credentials.auditor));
    const byToken = await reviewerQuality("window=week&date=2026-07-06", asToken(credentials.reporting));
    expect(byAuditor.reviewers.map((r) => r.reviewer.displayName)).toEqual(["Ada Ferrand", "Ben Holloway"]);
    expect(byToken.reviewers.map((r) => r.reviewer.displayName)).toEqual([null, null]);
    expect(byToken.reviewers.map((r) => r.reviewer.pseudonym)).toEqual(bySupervisor.reviewers.map((r) => r.reviewer.pseudonym));
    expect(byToken.reviewers[0].reviewer.pseudonym).toMatch(/^rv_/);
    expect(byToken.reviewers.map((r) => r.hitRate)).toEqual(bySupervisor.reviewers.map((r) => r.hitRate));
    await expect(reviewerQuality("window=week&date=2026-07-06", asPerson(credentials.analyst))).rejects.toMatchObject({ status: 403 });
  });

  it("counts a reviewer's work by the day they closed it: a day window holds only that day", async () => {
    const { team, reviewers } = await reviewerQuality("window=day&date=2026-07-07");
    // Day 2 first reviews: A a08 a10 b05 b07 (4), B a07 a09 a11 b06 b08 s2 (6).
    expect(reviewers.map((r) => r.closed)).toEqual([4, 6]);
    expect(team.closed).toBe(10);
  });
});
