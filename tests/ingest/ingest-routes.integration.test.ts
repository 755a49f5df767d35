// The ingest routes called as Next calls them (a Request in, a Response out), through the one API
// wrapper: tokens and scopes, sessions and permissions, and every status the ingest answers with.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { NextRequest } from "next/server";
import { useTestDatabase } from "@/tests/support/test-database";
import { createApiClient } from "@/lib/api-clients/create-api-client";
import { createSession } from "@/lib/auth/create-session";
import { SESSION_COOKIE } from "@/lib/auth/session-cookie";
import { alertRow, createUser, labelRow, loader, outcomeRow, registerModelVersions } from "@/tests/ingest/factories";

const database = await useTestDatabase();
const { prisma } = database;
// The routes use the app's database handle; point it at this file's database before first use.
process.env.DATABASE_URL = database.url;
delete (globalThis as { triageDesk?: unknown }).triageDesk;
const alertsRoute = await import("@/app/api/v1/alerts/route");
const labelsRoute = await import("@/app/api/v1/labels/route");
const outcomesRoute = await import("@/app/api/v1/outcomes/route");
const modelVersionsRoute = await import("@/app/api/v1/model-versions/route");
const batchesRoute = await import("@/app/api/v1/ingest-batches/route");
const rejectedRoute = await import("@/app/api/v1/ingest-batches/[id]/rejected/route");

afterAll(async () => {
  const handles = (globalThis as { triageDesk?: { prisma: { $disconnect(): Promise<void> }; pool: { end(): Promise<void> } } }).triageDesk;
  if (handles) {
    await handles.prisma.$disconnect();
    await handles.pool.end();
  }
});

const credentials = { scorer: "", readOnly: "", supervisorCookie: "", analystCookie: "", adminCookie: "" };
const segment = (params: Record<string, string> = {}) => ({ params: Promise.resolve(params) as Promise<never> });

function post(path: string, body: string, headers: Record<string, string>): NextRequest {
  return new NextRequest(`http://desk.test${path}`, { method: "POST", body, headers: { host: "desk.test", "x-forwarded-for": "192.0.2.10", ...headers } });
}
function get(path: string, headers: Record<string, string>): NextRequest {
  return new NextRequest(`http://desk.test${path}`, { method: "GET", headers: { host: "desk.test", ...headers } });
}
const asScorer = (contentType = "application/json") => ({ authorization: `Bearer ${credentials.scorer}`, "content-type": contentType });
const asPerson = (cookie: string, contentType = "application/json") => ({ cookie: `${SESSION_COOKIE}=${cookie}`, origin: "http://desk.test", "content-type": contentType });

beforeAll(async () => {
  await registerModelVersions(prisma);
  const admin = await createUser(prisma, "ines.admin@example.test", "admin");
  const supervisor = await createUser(prisma, "sam.supervisor@example.test", "supervisor");
  const analyst = await createUser(prisma, "ana.reviewer@example.test", "analyst");
  credentials.scorer = (await createApiClient(prisma, { actor: admin, name: "scoring-main", scopes: ["alerts:write", "labels:write", "outcomes:write"] })).token;
  credentials.readOnly = (await createApiClient(prisma, { actor: admin, name: "wallboard", scopes: ["metrics:read"] })).token;
  const now = new Date();
  credentials.adminCookie = (await createSession(prisma, { userId: admin.id, now })).token;
  credentials.supervisorCookie = (await createSession(prisma, { userId: supervisor.id, now })).token;
  credentials.analystCookie = (await createSession(prisma, { userId: analyst.id, now })).token;
  void loader;
});

describe("POST /api/v1/alerts", () => {
  it("answers 200 with counts, reasons and the batch id, and records the API client as sender", async () => {
    const rows = [alertRow(), alertRow({ merchantCountry: "Netherlands" })];
    const response = await alertsRoute.POST(post("/api/v1/alerts", JSON.stringify(rows), asScorer()), segment());
    expect(response.status).toBe(200);
    const answer = await response.json();
    expect(answer).toMatchObject({ accepted: 1, duplicate: 0, conflict: 0, rejected: 1, errors: [{ row: 1, path: "merchantCountry" }] });
    const batch = await prisma.ingestBatch.findUniqueOrThrow({ where: { id: answer.batchId }, include: { apiClient: true } });
    expect(batch).toMatchObject({ channel: "api", kind: "alerts" });
    expect(batch.apiClient?.name).toBe("scoring-main");
  });

  it("reads NDJSON by its content type", async () => {
    const body = `${JSON.stringify(alertRow())}\n\n${JSON.stringify(alertRow())}\n`;
    const response = await alertsRoute.POST(post("/api/v1/alerts", body, asScorer("application/x-ndjson")), segment());
    expect(response.status).toBe(200);
    expect(await response.json()).toMatchObject({ accepted: 2 });
  });

  it("answers 422 and stores nothing when an atomic request has a bad row", async () => {
    const good = alertRow();
    const response = await alertsRoute.POST(post("/api/v1/alerts?atomic=true", JSON.stringify([good, alertRow({ score: null })]), asScorer()), segment());
    expect(response.status).toBe(422);
    expect(await response.json()).toMatchObject({ accepted: 0, rejected: 2, rolledBack: true });
    expect(await prisma.alert.count({ where: { externalId: good.externalId as string } })).toBe(0);
  });

  it("answers 400 with the position of malformed JSON, without quoting the body", async () => {
    const response = await alertsRoute.POST(post("/api/v1/alerts", '[{"externalId": "x", "entityRef": "4111111111111111",}]', asScorer()), segment());
    expect(response.status).toBe(400);
    const body = await response.json();
    expect(body.error.code).toBe("invalid_input");
    expect(body.error.message).toMatch(/line 1, column \d+/);
    expect(JSON.stringify(body)).not.toContain("4111111111111111");

    const ndjson = await alertsRoute.POST(post("/api/v1/alerts", `${JSON.stringify(alertRow())}\n{"externalId":`, asScorer("application/x-ndjson")), segment());
    expect(ndjson.status).toBe(400);
    expect((await ndjson.json()).error.message).toContain("line 2");
  });

  it("answers 415 for a content type it does not read", async () => {
    const response = await alertsRoute.POST(post("/api/v1/alerts", JSON.stringify([alertRow()]), asScorer("text/plain")), segment());
    expect(response.status).toBe(415);
    expect((await response.json()).error.code).toBe("unsupported_media_type");
  });

  it("answers 413 for more rows than Settings allow, and for a body over the size cap", async () => {
    await prisma.setting.create({ data: { key: "ingest", value: { channels: ["card_present", "card_not_present", "atm"], maxRowsPerRequest: 2 } } });
    try {
      const response = await alertsRoute.POST(post("/api/v1/alerts", JSON.stringify([alertRow(), alertRow(), alertRow()]), asScorer()), segment());
      expect(response.status).toBe(413);
      expect((await response.json()).error.message).toContain("at most 2");
    } finally {
      await prisma.setting.delete({ where: { key: "ingest" } });
    }
    const huge = `[${" ".repeat(33 * 1024 * 1024)}]`;
    const response = await alertsRoute.POST(post("/api/v1/alerts", huge, asScorer()), segment());
    expect(response.status).toBe(413);
  });

  it("answers 401 without credentials and 403 for a token without alerts:write or an analyst's session", async () => {
    const body = JSON.stringify([alertRow()]);
    expect((await alertsRoute.POST(post("/api/v1/alerts", body, { "content-type": "application/json" }), segment())).status).toBe(401);
    expect((await alertsRoute.POST(post("/api/v1/alerts", body, { authorization: `Bearer ${credentials.readOnly}`, "content-type": "application/json" }), segment())).status).toBe(403);
    expect((await alertsRoute.POST(post("/api/v1/alerts", body, asPerson(credentials.analystCookie)), segment())).status).toBe(403);
  });

  it("takes a supervisor's upload from the screen as channel upload, with file name and row offset", async () => {
    const csv = [
      "externalId,occurredAt,amountMinor,currency,channel,merchantCategoryCode,merchantCountry,entityRef,modelName,modelVersion,score",
      "up-1,2026-11-30T10:00:00Z,1200,EUR,atm,6011,ES,tok_a1,txn-classifier,3.1.0,0.7",
      "up-2,2026-11-30T10:00:00Z,1200,EUR,atm,6011,ES,tok_a1,txn-classifier,3.1.0,seven",
    ].join("\n");
    const response = await alertsRoute.POST(post("/api/v1/alerts?fileName=C%3A%5Cfiles%5Cnight.csv&firstRow=4000", csv, asPerson(credentials.supervisorCookie, "text/csv")), segment());
    expect(response.status).toBe(200);
    const answer = await response.json();
    expect(answer).toMatchObject({ accepted: 1, rejected: 1, errors: [{ row: 4001, path: "score", externalId: "up-2" }] });
    const batch = await prisma.ingestBatch.findUniqueOrThrow({ where: { id: answer.batchId }, include: { user: true } });
    expect(batch).toMatchObject({ channel: "upload", fileName: "night.csv" });
    expect(batch.user?.email).toBe("sam.supervisor@example.test");
  });
});

describe("POST /api/v1/labels and /api/v1/outcomes", () => {
  it("reports labels for alerts that have not arrived as unmatched", async () => {
    const response = await labelsRoute.POST(post("/api/v1/labels", JSON.stringify([labelRow({ externalId: "not-yet-1" })]), asScorer()), segment());
    expect(response.status).toBe(200);
    expect(await response.json()).toMatchObject({ accepted: 1, unmatched: 1, unmatchedLabels: [{ row: 0, externalId: "not-yet-1" }] });
  });

  it("closes alerts with back-filled outcomes, and needs outcomes:write", async () => {
    const alert = alertRow();
    await alertsRoute.POST(post("/api/v1/alerts", JSON.stringify([alert]), asScorer()), segment());
    const body = JSON.stringify([outcomeRow({ externalId: alert.externalId })]);
    const refused = await outcomesRoute.POST(post("/api/v1/outcomes", body, { authorization: `Bearer ${credentials.readOnly}`, "content-type": "application/json" }), segment());
    expect(refused.status).toBe(403);
    const response = await outcomesRoute.POST(post("/api/v1/outcomes", body, asScorer()), segment());
    expect(response.status).toBe(200);
    expect(await response.json()).toMatchObject({ accepted: 1, closedAlerts: 1 });
    expect(await prisma.alert.findFirstOrThrow({ where: { externalId: alert.externalId as string } })).toMatchObject({ state: "closed" });
  });
});

describe("model versions and the ingest log", () => {
  it("lists model versions for any valid token, and lets only an admin's session save one", async () => {
    const listed = await modelVersionsRoute.GET(get("/api/v1/model-versions", { authorization: `Bearer ${credentials.readOnly}` }), segment());
    expect(listed.status).toBe(200);
    expect((await listed.json()).modelVersions.map((version: { modelName: string }) => version.modelName)).toEqual(["spend-ae", "txn-classifier"]);

    const input = JSON.stringify({ modelName: "spend-ae", version: "1.1.0", scoreKind: "anomaly", priorHitRate: 0.1, alertThreshold: 4.2 });
    expect((await modelVersionsRoute.POST(post("/api/v1/model-versions", input, asScorer()), segment())).status).toBe(403);
    expect((await modelVersionsRoute.POST(post("/api/v1/model-versions", input, asPerson(credentials.supervisorCookie)), segment())).status).toBe(403);
    const created = await modelVersionsRoute.POST(post("/api/v1/model-versions", input, asPerson(credentials.adminCookie)), segment());
    expect(created.status).toBe(201);
    expect(await created.json()).toMatchObject({ created: true, modelVersion: { modelName: "spend-ae", version: "1.1.0" } });
    const invalid = await modelVersionsRoute.POST(post("/api/v1/model-versions", JSON.stringify({ modelName: "x" }), asPerson(credentials.adminCookie)), segment());
    expect(invalid.status).toBe(400);
  });

  it("lists batches and downloads a batch's rejected rows as CSV", async () => {
    const rows = [alertRow(), alertRow({ externalId: "=cmd|' /C calc'!A0", currency: "eur" }), alertRow({ entityRef: "4111 1111 1111 1111" })];
    const ingested = await (await alertsRoute.POST(post("/api/v1/alerts", JSON.stringify(rows), asScorer()), segment())).json();

    const list = await batchesRoute.GET(get("/api/v1/ingest-batches?limit=5&kind=alerts", { cookie: `${SESSION_COOKIE}=${credentials.supervisorCookie}` }), segment());
    expect(list.status).toBe(200);
    const { batches, total } = await list.json();
    expect(total).toBeGreaterThanOrEqual(5);
    expect(batches[0]).toMatchObject({ id: ingested.batchId, sender: "api:scoring-main", rowCount: 3, accepted: 1, rejected: 2, problemCount: 2 });
    expect((await batchesRoute.GET(get("/api/v1/ingest-batches", { cookie: `${SESSION_COOKIE}=${credentials.analystCookie}` }), segment())).status).toBe(403);

    const download = await rejectedRoute.GET(get(`/api/v1/ingest-batches/${ingested.batchId}/rejected`, { cookie: `${SESSION_COOKIE}=${credentials.supervisorCookie}` }), segment({ id: ingested.batchId }));
    expect(download.status).toBe(200);
    expect(download.headers.get("content-type")).toContain("text/csv");
    expect(download.headers.get("content-disposition")).toMatch(/attachment; filename="rejected-alerts-.*\.csv"/);
    const lines = (await download.text()).trim().split("\r\n");
    expect(lines[0]).toBe("row,externalId,kind,field,reason");
    // A cell a spreadsheet would run as a formula is defused with a leading apostrophe.
    expect(lines[1]).toMatch(/^1,'=cmd\|' \/C calc'!A0,rejected,currency,/);
    expect(lines[2]).toMatch(/^2,[^,]+,rejected,entityRef,.*411111\*\*\*\*\*\*1111/);
    const missing = await rejectedRoute.GET(get("/api/v1/ingest-batches/00000000-0000-4000-8000-000000000000/rejected", { cookie: `${SESSION_COOKIE}=${credentials.supervisorCookie}` }), segment({ id: "00000000-0000-4000-8000-000000000000" }));
    expect(missing.status).toBe(404);
  });
});
