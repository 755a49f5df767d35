// The audit routes called as Next calls them (a Request in, a Response out), through the one API
// wrapper: who may call them, what they answer, and what they record.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { NextRequest } from "next/server";
import { useTestDatabase } from "@/tests/support/test-database";
import { createApiClient } from "@/lib/api-clients/create-api-client";
import { createSession } from "@/lib/auth/create-session";
import { SESSION_COOKIE } from "@/lib/auth/session-cookie";
import { makeUser, type MadeUser } from "@/tests/auth/factories";
import { createAlerts, withTriggersDisabled } from "@/tests/audit/audit-fixtures";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import { readCsv } from "@/tests/audit/csv-reader";

const database = await useTestDatabase();
const { prisma, pool } = database;
// The routes use the app's database handle; point it at this file's database before first use.
process.env.DATABASE_URL = database.url;
delete (globalThis as { triageDesk?: unknown }).triageDesk;
const verifyRoute = await import("@/app/api/v1/audit/verify/route");
const eventsRoute = await import("@/app/api/v1/audit/events/route");

afterAll(async () => {
  const handles = (globalThis as { triageDesk?: { prisma: { $disconnect(): Promise<void> }; pool: { end(): Promise<void> } } }).triageDesk;
  if (handles) {
    await handles.prisma.$disconnect();
    await handles.pool.end();
  }
});

const segment = () => ({ params: Promise.resolve({}) as Promise<never> });
const get = (path: string, headers: Record<string, string>) => new NextRequest(`http://desk.test${path}`, { method: "GET", headers: { host: "desk.test", "x-forwarded-for": "192.0.2.44", ...headers } });
const credentials = { monitor: "", scorer: "", auditorCookie: "", analystCookie: "" };
const asToken = (token: string) => ({ authorization: `Bearer ${token}` });
const asPerson = (cookie: string) => ({ cookie: `${SESSION_COOKIE}=${cookie}` });
let auditor: MadeUser;
let analyst: MadeUser;
let alert: { id: string; externalId: string };

beforeAll(async () => {
  const admin = await makeUser(prisma, { role: "admin" });
  auditor = await makeUser(prisma, { role: "auditor" });
  analyst = await makeUser(prisma, { role: "analyst" });
  credentials.monitor = (await createApiClient(prisma, { actor: admin.actor, name: "chain-monitor", scopes: ["metrics:read"] })).token;
  credentials.scorer = (await createApiClient(prisma, { actor: admin.actor, name: "scoring-main", scopes: ["alerts:write"] })).token;
  const now = new Date();
  credentials.auditorCookie = (await createSession(prisma, { userId: auditor.id, now })).token;
  credentials.analystCookie = (await createSession(prisma, { userId: analyst.id, now })).token;
  [alert] = await createAlerts(pool, 1, "ROUTE");
  await prisma.$transaction((tx) =>
    recordAuditEvent(tx, {
      actor: { type: "user", id: analyst.id, label: analyst.email },
      subject: { type: "alert", id: alert.id },
      event: { action: "outcome.recorded", payload: { alertId: alert.id, externalId: alert.externalId, outcome: "legitimate", reason: "known merchant", round: 1, handlingSeconds: 80, origin: "screen", sentToSecondReview: false } },
    }),
  );
});

describe("GET /api/v1/audit/verify", () => {
  it("answers an API token with metrics:read and a signed-in auditor with the count and head hash", async () => {
    for (const headers of [asToken(credentials.monitor), asPerson(credentials.auditorCookie)]) {
      const response = await verifyRoute.GET(get("/api/v1/audit/verify", headers), segment());
      expect(response.status).toBe(200);
      const body = await response.json();
      expect(body).toMatchObject({ intact: true, verified: expect.any(Number), headHash: expect.stringMatching(/^[0-9a-f]{64}$/) });
      expect(body.summary).toBe(`verified ${body.verified} events, head hash ${body.headHash}`);
    }
  });

  it("refuses an analyst and a token without metrics:read, and says why", async () => {
    const analystAnswer = await verifyRoute.GET(get("/api/v1/audit/verify", asPerson(credentials.analystCookie)), segment());
    expect(analystAnswer.status).toBe(403);
    const scorerAnswer = await verifyRoute.GET(get("/api/v1/audit/verify", asToken(credentials.scorer)), segment());
    expect(scorerAnswer.status).toBe(403);
    expect((await scorerAnswer.json()).error.message).toContain("metrics:read");
    expect((await verifyRoute.GET(get("/api/v1/audit/verify", {}), segment())).status).toBe(401);
  });

  it("checks anchors and refuses one that is not a hash", async () => {
    const first = await (await verifyRoute.GET(get("/api/v1/audit/verify", asToken(credentials.monitor)), segment())).json();
    const anchored = await (await verifyRoute.GET(get(`/api/v1/audit/verify?anchor=${first.headHash}`, asToken(credentials.monitor)), segment())).json();
    expect(anchored.intact).toBe(true);
    expect(anchored.anchors).toEqual([{ hash: first.headHash, foundAtId: first.headId }]);
    const bad = await verifyRoute.GET(get("/api/v1/audit/verify?anchor=last-tuesday", asToken(credentials.monitor)), segment());
    expect(bad.status).toBe(400);
    expect((await bad.json()).error.issues).toEqual([{ path: "anchor", message: '"last-tuesday" is not a SHA-256 hash' }]);
  });
});

describe("GET /api/v1/audit/events", () => {
  it("answers who cleared an alert as JSON and records the view once per minute", async () => {
    const path = `/api/v1/audit/events?preset=cleared_alert&alert=${alert.externalId}`;
    const response = await eventsRoute.GET(get(path, asPerson(credentials.auditorCookie)), segment());
    expect(response.status).toBe(200);
    const body = await response.json();
    expect(body.events).toMatchObject([{ action: "outcome.recorded", actorLabel: analyst.email, subjectId: alert.id }]);
    expect(body.resolved.alerts).toEqual([alert]);
    expect(body.links).toMatchObject({ older: null, newer: null, csv: `/api/v1/audit/events?preset=cleared_alert&alert=${alert.externalId}&format=csv` });
    await eventsRoute.GET(get(path, asPerson(credentials.auditorCookie)), segment());
    const views = await prisma.auditEvent.findMany({ where: { action: "audit.viewed", actorId: auditor.id } });
    expect(views).toHaveLength(1);
    expect(views[0]).toMatchObject({ payload: { filter: { preset: "cleared_alert", alert: alert.externalId } }, ipAddress: "192.0.2.44" });
  });

  it("answers 400 naming the field of a bad filter", async () => {
    const response = await eventsRoute.GET(get("/api/v1/audit/events?preset=cleared_by", asToken(credentials.monitor)), segment());
    expect(response.status).toBe(400);
    expect((await response.json()).error.issues).toEqual([{ path: "actor", message: expect.stringContaining("reviewer") }]);
  });

  it("streams CSV as an attachment and records the export with its row count", async () => {
    const response = await eventsRoute.GET(get(`/api/v1/audit/events?format=csv&actor=${encodeURIComponent(analyst.email)}`, asToken(credentials.monitor)), segment());
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toBe("text/csv; charset=utf-8; header=present");
    expect(response.headers.get("content-disposition")).toMatch(/^attachment; filename="audit-trail-.*\.csv"$/);
    const [header, ...rows] = readCsv(await response.text());
    // The analyst's refused call to verify above is on the record too.
    expect(rows.map((row) => row[header.indexOf("action")])).toEqual(["outcome.recorded", "user.refused"]);
    const exported = await prisma.auditEvent.findUniqueOrThrow({ where: { id: BigInt(response.headers.get("x-audit-export-event")!) } });
    expect(exported).toMatchObject({ action: "audit.exported", actorLabel: "api:chain-monitor", payload: { filter: { actor: analyst.email }, rowCount: 2, format: "csv" } });
  });

  it("keeps answering after the chain is broken, and verify then names the event", async () => {
    const [first] = await prisma.auditEvent.findMany({ orderBy: { id: "asc" }, take: 1 });
    await withTriggersDisabled(pool, "UPDATE audit_events SET ip_address = '203.0.113.250' WHERE id = $1", [first.id]);
    const body = await (await verifyRoute.GET(get("/api/v1/audit/verify", asToken(credentials.monitor)), segment())).json();
    expect(body).toMatchObject({ intact: false, verified: 0, brokenAt: { id: first.id.toString(), afterId: null } });
    expect(body.summary).toMatch(new RegExp(`^broken link at event ${first.id} `));
  });
});
