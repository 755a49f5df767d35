// GET /api/v1/queue and POST /api/v1/model-versions/{id}/refit called as Next calls them (a Request
// in, a Response out), through the one API wrapper.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { NextRequest } from "next/server";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlert, createModelVersion, type TestModelVersion } from "@/tests/support/factories";
import { makeUser } from "@/tests/auth/factories";
import { createApiClient } from "@/lib/api-clients/create-api-client";
import { createSession } from "@/lib/auth/create-session";
import { SESSION_COOKIE } from "@/lib/auth/session-cookie";
import { updateSettings } from "@/lib/settings/update-settings";

const database = await useTestDatabase();
const { prisma } = database;
// The routes use the app's database handle; point it at this file's database before first use.
process.env.DATABASE_URL = database.url;
delete (globalThis as { triageDesk?: unknown }).triageDesk;
const queueRoute = await import("@/app/api/v1/queue/route");
const refitRoute = await import("@/app/api/v1/model-versions/[id]/refit/route");

afterAll(async () => {
  const handles = (globalThis as { triageDesk?: { prisma: { $disconnect(): Promise<void> }; pool: { end(): Promise<void> } } }).triageDesk;
  if (handles) {
    await handles.prisma.$disconnect();
    await handles.pool.end();
  }
});

const request = (method: string, path: string, headers: Record<string, string>) =>
  new NextRequest(`http://desk.test${path}`, { method, headers: { host: "desk.test", "x-forwarded-for": "192.0.2.7", ...headers } });
const noParams = () => ({ params: Promise.resolve({}) as Promise<never> });
const withId = (id: string) => ({ params: Promise.resolve({ id }) });
const asToken = (token: string) => ({ authorization: `Bearer ${token}` });
const asPerson = (cookie: string) => ({ cookie: `${SESSION_COOKIE}=${cookie}` });
const credentials = { wallboard: "", scorer: "", analyst: "", supervisor: "" };
let model: TestModelVersion;
const hoursAgo = (hours: number) => new Date(Date.now() - hours * 3_600_000);

beforeAll(async () => {
  const admin = await makeUser(prisma, { role: "admin" });
  const analyst = await makeUser(prisma, { role: "analyst" });
  const supervisor = await makeUser(prisma, { role: "supervisor" });
  credentials.wallboard = (await createApiClient(prisma, { actor: admin.actor, name: "wallboard", scopes: ["metrics:read"] })).token;
  credentials.scorer = (await createApiClient(prisma, { actor: admin.actor, name: "scorer", scopes: ["alerts:write"] })).token;
  credentials.analyst = (await createSession(prisma, { userId: analyst.id, now: new Date() })).token;
  credentials.supervisor = (await createSession(prisma, { userId: supervisor.id, now: new Date() })).token;
  model = await createModelVersion(prisma);
  await updateSettings(prisma, { actor: { type: "system", id: null, label: "test" }, key: "calibration", value: { minLabels: 4, minPerClass: 2, refitAfterNewOutcomes: 10 } });
  // Three waiting alerts: one overdue with a small expected loss, two on time.
  const waiting = (externalId: string, priority: number, dueAt: Date) =>
    createAlert(prisma, model.id, { externalId, priority, expectedLossMinor: priority, exposureMinor: priority * 2, probability: 0.5, probabilitySource: "corrected_score", dueAt, receivedAt: hoursAgo(5) });
  await waiting("Q-small-overdue", 100, hoursAgo(1));
  await waiting("Q-large", 9_000, hoursAgo(-20));
  await waiting("Q-middle", 4_000, hoursAgo(-20));
});

describe("GET /api/v1/queue", () => {
  it("lists waiting alerts in take-next order for a wallboard token and for anyone signed in", async () => {
    for (const headers of [asToken(credentials.wallboard), asPerson(credentials.analyst)]) {
      const response = await queueRoute.GET(request("GET", "/api/v1/queue?limit=2", headers), noParams());
      expect(response.status).toBe(200);
      const body = await response.json();
      expect(body.alerts.map((alert: { externalId: string }) => alert.externalId)).toEqual(["Q-small-overdue", "Q-large"]);
      expect(body.alerts[0]).toMatchObject({
        position: 1,
        probability: 0.5,
        calibrated: false,
        exposureMinor: 200,
        expectedLossMinor: 100,
        overdue: true,
        modelVersion: { id: model.id, modelName: model.modelName, version: model.version },
      });
      expect(body.alerts[1]).toMatchObject({ position: 2, overdue: false, dueAt: expect.stringMatching(/Z$/) });
    }
    const next = await (await queueRoute.GET(request("GET", "/api/v1/queue?limit=2&offset=2", asToken(credentials.wallboard)), noParams())).json();
    expect(next.alerts.map((alert: { externalId: string; position: number }) => [alert.externalId, alert.position])).toEqual([["Q-middle", 3]]);
  });

  it("refuses a token without metrics:read and a caller without credentials", async () => {
    expect((await queueRoute.GET(request("GET", "/api/v1/queue", asToken(credentials.scorer)), noParams())).status).toBe(403);
    expect((await queueRoute.GET(request("GET", "/api/v1/queue", {}), noParams())).status).toBe(401);
  });

  it("names the field when the limit is out of range", async () => {
    const response = await queueRoute.GET(request("GET", "/api/v1/queue?limit=5000", asToken(credentials.wallboard)), noParams());
    expect(response.status).toBe(400);
    expect((await response.json()).error.issues).toEqual([{ path: "limit", message: "limit must be at most 500" }]);
  });
});

describe("POST /api/v1/model-versions/{id}/refit", () => {
  it("a supervisor refits; the answer carries the map and how many alerts were re-derived", async () => {
    const before = await refitRoute.POST(request("POST", `/api/v1/model-versions/${model.id}/refit`, asPerson(credentials.supervisor)), withId(model.id));
    expect(before.status).toBe(409);
    expect((await before.json()).error.message).toMatch(/Not enough outcomes to calibrate/);

    for (const [score, outcome] of [[0.2, "legitimate"], [0.3, "legitimate"], [0.7, "confirmed_fraud"], [0.9, "confirmed_fraud"]] as const) {
      await createAlert(prisma, model.id, { score, state: "closed", finalOutcome: outcome });
    }
    const response = await refitRoute.POST(request("POST", `/api/v1/model-versions/${model.id}/refit`, asPerson(credentials.supervisor)), withId(model.id));
    expect(response.status).toBe(200);
    const body = await response.json();
    expect(body).toMatchObject({ recomputedAlerts: 3, calibrationMap: { modelVersionId: model.id, labelCount: 4, positiveCount: 2, brierScore: 0 } });
    expect(await prisma.auditEvent.count({ where: { action: "calibration.refit", subjectId: model.id } })).toBe(1);
  });

  it("refuses an analyst and an API token", async () => {
    expect((await refitRoute.POST(request("POST", `/api/v1/model-versions/${model.id}/refit`, asPerson(credentials.analyst)), withId(model.id))).status).toBe(403);
    expect((await refitRoute.POST(request("POST", `/api/v1/model-versions/${model.id}/refit`, asToken(credentials.wallboard)), withId(model.id))).status).toBe(403);
  });
});
