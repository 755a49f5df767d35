// API clients and the one wrapper of the API routes, against a real database: scopes, revocation,
// and what a refused caller is told (OWASP ASVS 5.0 §4.1 and §8.2; from memory).
import { createHash } from "node:crypto";
import { afterAll, describe, expect, it } from "vitest";
import { NextRequest } from "next/server";
import { useTestDatabase } from "@/tests/support/test-database";
import { allowConsoleError } from "@/tests/support/fail-on-console-error";
import { AppError } from "@/lib/errors";
import { systemActor } from "@/lib/auth/actor";
import { createApiClient } from "@/lib/api-clients/create-api-client";
import { revokeApiClient } from "@/lib/api-clients/revoke-api-client";
import { listApiClients } from "@/lib/api-clients/list-api-clients";
import { authenticateApiToken } from "@/lib/api-clients/authenticate-api-token";
import { apiTokenPattern } from "@/lib/api-clients/schemas";
import { apiRouteAccess, type ApiRouteKey } from "@/lib/http/route-registry";
import { signIn } from "@/lib/auth/sign-in";
import { TEST_PASSWORD, makeUser } from "@/tests/auth/factories";

const database = await useTestDatabase();
const { prisma } = database;
// apiRoute() uses the app's database handle; point it at this file's database before first use.
process.env.DATABASE_URL = database.url;
delete (globalThis as { triageDesk?: unknown }).triageDesk;
const { apiRoute } = await import("@/lib/http/api-route");

afterAll(async () => {
  const handles = (globalThis as { triageDesk?: { prisma: { $disconnect(): Promise<void> }; pool: { end(): Promise<void> } } }).triageDesk;
  if (handles) {
    await handles.prisma.$disconnect();
    await handles.pool.end();
  }
});

// Routes that exist only in this test, to exercise each kind of registry entry.
const registry = apiRouteAccess as Record<string, unknown>;
registry["POST /api/v1/test-alerts"] = { scope: "alerts:write", permission: "ingest.upload" };
registry["GET /api/v1/test-token-only"] = { scope: "metrics:read" };
registry["GET /api/v1/test-broken"] = { scope: "any", permission: "queue.view" };

const writeAlerts = apiRoute("POST /api/v1/test-alerts" as ApiRouteKey, async (_request, { actor }) => ({ accepted: true, by: actor.type }));
const tokenOnly = apiRoute("GET /api/v1/test-token-only" as ApiRouteKey, async () => ({ ok: true }));
const broken = apiRoute("GET /api/v1/test-broken" as ApiRouteKey, async (_request, { params }) => {
  if ((params as { kind?: string }).kind === "expected") throw new AppError("conflict", "That alert was closed already.");
  throw new Error('relation "secret_table" does not exist');
});
const whoami = apiRoute("GET /api/v1/whoami", async (_request, { actor }) => ({ kind: actor.type }));

function request(method: string, path: string, headers: Record<string, string> = {}): NextRequest {
  return new NextRequest(`http://desk.test${path}`, { method, headers: { host: "desk.test", "x-forwarded-for": "192.0.2.99", ...headers } });
}
const segment = (params: Record<string, string> = {}) => ({ params: Promise.resolve(params) as Promise<never> });
const bearer = (token: string) => ({ authorization: `Bearer ${token}` });

describe("API clients", () => {
  it("show the token once; only its SHA-256 and first characters are stored", async () => {
    const admin = await makeUser(prisma, { role: "admin" });
    const { client, token } = await createApiClient(prisma, { actor: admin.actor, name: "scoring-main", scopes: ["metrics:read", "alerts:write", "alerts:write"] });
    expect(token).toMatch(apiTokenPattern);
    expect(client.scopes).toEqual(["alerts:write", "metrics:read"]);
    const row = await prisma.apiClient.findUniqueOrThrow({ where: { id: client.id } });
    expect(row.tokenHash).toBe(createHash("sha256").update(token).digest("hex"));
    expect(row.tokenPrefix).toBe(token.slice(0, 10));
    expect(JSON.stringify(await listApiClients(prisma))).not.toContain(token);
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { subjectId: client.id, action: "api_client.created" } });
    expect(event.payload).toEqual({ name: "scoring-main", scopes: ["alerts:write", "metrics:read"] });
  });

  it("refuse a duplicate name, an unknown scope and a bad name", async () => {
    const actor = systemActor("cli:test");
    await createApiClient(prisma, { actor, name: "dup-client", scopes: ["exports:read"] });
    await expect(createApiClient(prisma, { actor, name: "dup-client", scopes: ["exports:read"] })).rejects.toMatchObject({ code: "conflict" });
    await expect(createApiClient(prisma, { actor, name: "other", scopes: ["alerts:delete"] })).rejects.toMatchObject({ code: "invalid_input" });
    await expect(createApiClient(prisma, { actor, name: "Bad Name", scopes: ["exports:read"] })).rejects.toMatchObject({ code: "invalid_input" });
  });

  it("a valid token is accepted and its last use recorded; a revoked one is refused from then on", async () => {
    const actor = systemActor("cli:test");
    const { client, token } = await createApiClient(prisma, { actor, name: "revoke-me", scopes: ["labels:write"] });
    const now = new Date("2030-06-01T10:00:00Z");
    expect(await authenticateApiToken(prisma, { token, now })).toMatchObject({ status: "ok", actor: { name: "revoke-me", scopes: ["labels:write"] } });
    expect((await prisma.apiClient.findUniqueOrThrow({ where: { id: client.id } })).lastUsedAt?.toISOString()).toBe(now.toISOString());
    const revoked = await revokeApiClient(prisma, { actor, client: { name: "revoke-me" }, now });
    expect(revoked.alreadyRevoked).toBe(false);
    expect(await authenticateApiToken(prisma, { token, now })).toMatchObject({ status: "revoked", name: "revoke-me" });
    expect((await revokeApiClient(prisma, { actor, client: { id: client.id }, now })).alreadyRevoked).toBe(true);
    expect(await prisma.auditEvent.count({ where: { subjectId: client.id, action: "api_client.revoked" } })).toBe(1);
    expect(await authenticateApiToken(prisma, { token: "tdk_unknown", now })).toEqual({ status: "unknown" });
  });
});

describe("apiRoute", () => {
  it("accepts a token with the route's scope and tags the answer with a request id", async () => {
    const { token } = await createApiClient(prisma, { actor: systemActor("cli:test"), name: "writer", scopes: ["alerts:write"] });
    const response = await writeAlerts(request("POST", "/api/v1/test-alerts", bearer(token)), segment());
    expect(response.status).toBe(200);
    expect(await response.json()).toEqual({ accepted: true, by: "api_client" });
    expect(response.headers.get("x-request-id")).toMatch(/^[0-9a-f-]{36}$/);
    expect(response.headers.get("cache-control")).toBe("no-store");
  });

  it("keeps a caller's own plain request id", async () => {
    const { token } = await createApiClient(prisma, { actor: systemActor("cli:test"), name: "tracer", scopes: ["metrics:read"] });
    const response = await whoami(request("GET", "/api/v1/whoami", { ...bearer(token), "x-request-id": "scoring-run-0042" }), segment());
    expect(response.headers.get("x-request-id")).toBe("scoring-run-0042");
  });

  it("refuses a token without the scope with 403 naming the scope, and records the refusal", async () => {
    const { client, token } = await createApiClient(prisma, { actor: systemActor("cli:test"), name: "reader-only", scopes: ["metrics:read"] });
    const response = await writeAlerts(request("POST", "/api/v1/test-alerts", bearer(token)), segment());
    expect(response.status).toBe(403);
    const body = await response.json();
    expect(body.error).toMatchObject({ code: "forbidden", message: 'This API token lacks the scope "alerts:write".', requestId: response.headers.get("x-request-id") });
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { subjectId: client.id, action: "api_client.refused" } });
    expect(event.payload).toMatchObject({ path: "POST /api/v1/test-alerts" });
    expect(event.requestId).toBe(body.error.requestId);
    expect(event.ipAddress).toBe("192.0.2.99");
  });

  it("tells a missing, malformed, unknown and revoked token apart, each with 401", async () => {
    const actor = systemActor("cli:test");
    const { token } = await createApiClient(prisma, { actor, name: "old-token", scopes: ["alerts:write"] });
    await revokeApiClient(prisma, { actor, client: { name: "old-token" }, now: new Date() });
    const cases: [Record<string, string>, string][] = [
      [{}, "No credentials"],
      [{ authorization: "Basic abc" }, "must be `Bearer <token>`"],
      [bearer("tdk_not-a-real-token"), "not known"],
      [bearer(token), "was revoked"],
    ];
    for (const [headers, message] of cases) {
      const response = await writeAlerts(request("POST", "/api/v1/test-alerts", headers), segment());
      expect(response.status).toBe(401);
      expect(response.headers.get("www-authenticate")).toMatch(/^Bearer/);
      const body = await response.json();
      expect(body.error.code).toBe("unauthenticated");
      expect(body.error.message).toContain(message);
    }
    const reasons = (await prisma.auditEvent.findMany({ where: { action: "api_client.refused" }, orderBy: { id: "asc" } })).map((event) => (event.payload as { reason: string }).reason);
    expect(reasons).toEqual(expect.arrayContaining(["missing_credentials", "malformed_authorization", "unknown_token", "revoked_token"]));
  });

  it("lets a signed-in person in when their role has the route's permission", async () => {
    const supervisor = await makeUser(prisma, { role: "supervisor" });
    const analyst = await makeUser(prisma, { role: "analyst" });
    const cookieOf = async (email: string) => {
      const result = await signIn(prisma, { email, password: TEST_PASSWORD, ipAddress: "192.0.2.60", now: new Date(), wait: async () => undefined });
      if (!result.ok) throw new Error(result.message);
      return `td_session=${result.token}`;
    };
    const allowed = await writeAlerts(request("POST", "/api/v1/test-alerts", { cookie: await cookieOf(supervisor.email), origin: "http://desk.test" }), segment());
    expect(allowed.status).toBe(200);
    const analystCookie = await cookieOf(analyst.email);
    const refused = await writeAlerts(request("POST", "/api/v1/test-alerts", { cookie: analystCookie, origin: "http://desk.test" }), segment());
    expect(refused.status).toBe(403);
    expect((await refused.json()).error.message).toBe('Your role (analyst) does not include the permission "ingest.upload".');
    expect(await prisma.auditEvent.count({ where: { actorId: analyst.id, action: "user.refused" } })).toBe(1);
    // A cookie-borne request from another site is refused even for a permitted role.
    const crossSite = await writeAlerts(request("POST", "/api/v1/test-alerts", { cookie: await cookieOf(supervisor.email), origin: "http://evil.test" }), segment());
    expect(crossSite.status).toBe(403);
    // A route for tokens only refuses sessions; an ended session is a 401.
    expect((await tokenOnly(request("GET", "/api/v1/test-token-only", { cookie: analystCookie }), segment())).status).toBe(403);
    expect((await whoami(request("GET", "/api/v1/whoami", { cookie: "td_session=ended-or-made-up" }), segment())).status).toBe(401);
  });

  it("maps an expected failure to its status and hides an unexpected one behind a request id", async () => {
    allowConsoleError();
    const { token } = await createApiClient(prisma, { actor: systemActor("cli:test"), name: "breaker", scopes: ["metrics:read"] });
    const expected = await broken(request("GET", "/api/v1/test-broken", bearer(token)), segment({ kind: "expected" }));
    expect(expected.status).toBe(409);
    expect((await expected.json()).error).toMatchObject({ code: "conflict", message: "That alert was closed already." });
    const unexpected = await broken(request("GET", "/api/v1/test-broken", bearer(token)), segment({ kind: "bug" }));
    expect(unexpected.status).toBe(500);
    const text = await unexpected.text();
    expect(text).not.toContain("secret_table");
    expect(JSON.parse(text).error.message).toContain(unexpected.headers.get("x-request-id"));
  });
});
