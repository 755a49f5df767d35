// The label-export routes called as Next calls them (a Request in, a Response out), through the one
// API wrapper: who may call them, what they stream, and what they record.
import { rm } from "node:fs/promises";
import path from "node:path";
import { NextRequest } from "next/server";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createApiClient } from "@/lib/api-clients/create-api-client";
import { createSession } from "@/lib/auth/create-session";
import { SESSION_COOKIE } from "@/lib/auth/session-cookie";
import { createLabelExport, defaultLabelExportDirectory } from "@/lib/exports/create-label-export";
import { listLabelExports } from "@/lib/exports/list-label-exports";
import { LABEL_EXPORT_COLUMNS } from "@/lib/exports/schemas";
import { at, choicesFor, createAlert, createModelVersion, createOutcome, createPerson, csvObjects, type Person } from "@/tests/exports/export-fixtures";

const database = await useTestDatabase();
const { prisma, pool } = database;
// The routes use the app's database handle; point it at this file's database before first use.
process.env.DATABASE_URL = database.url;
delete (globalThis as { triageDesk?: unknown }).triageDesk;
const streamRoute = await import("@/app/api/v1/label-exports/route");
const fileRoute = await import("@/app/api/v1/label-exports/[id]/file/route");

const keptFiles: string[] = [];
afterAll(async () => {
  for (const file of keptFiles) await rm(path.join(defaultLabelExportDirectory(), file), { force: true });
  const handles = (globalThis as { triageDesk?: { prisma: { $disconnect(): Promise<void> }; pool: { end(): Promise<void> } } }).triageDesk;
  if (handles) {
    await handles.prisma.$disconnect();
    await handles.pool.end();
  }
});

const segment = <P,>(params: P) => ({ params: Promise.resolve(params) as Promise<never> });
const get = (url: string, headers: Record<string, string>) => new NextRequest(`http://desk.test${url}`, { method: "GET", headers: { host: "desk.test", ...headers } });
const asToken = (token: string) => ({ authorization: `Bearer ${token}` });
const asPerson = (cookie: string) => ({ cookie: `${SESSION_COOKIE}=${cookie}` });
const credentials = { exporter: "", scorer: "", supervisor: "", analyst: "", auditor: "" };
let version: { id: string; modelName: string; version: string };
let reviewer: Person;

beforeAll(async () => {
  const admin = await createPerson(pool, { role: "admin" });
  const supervisor = await createPerson(pool, { role: "supervisor" });
  const analyst = await createPerson(pool, { role: "analyst" });
  const auditor = await createPerson(pool, { role: "auditor" });
  credentials.exporter = (await createApiClient(prisma, { actor: admin.actor, name: "retraining-job", scopes: ["exports:read"] })).token;
  credentials.scorer = (await createApiClient(prisma, { actor: admin.actor, name: "scoring-main", scopes: ["alerts:write"] })).token;
  const now = new Date();
  credentials.supervisor = (await createSession(prisma, { userId: supervisor.id, now })).token;
  credentials.analyst = (await createSession(prisma, { userId: analyst.id, now })).token;
  credentials.auditor = (await createSession(prisma, { userId: auditor.id, now })).token;
  version = await createModelVersion(pool, { modelName: "card-gbm", version: "2026.1" });
  reviewer = await createPerson(pool);
  for (const [index, outcome] of (["confirmed_fraud", "legitimate", "inconclusive"] as const).entries()) {
    const alert = await createAlert(pool, version.id, { occurredAt: at(`2026-01-0${index + 1}T00:00:00Z`), externalId: `route-${index}` });
    await createOutcome(pool, alert.id, reviewer, { outcome, closedAt: at(`2026-01-0${index + 2}T00:00:00Z`) });
  }
});

async function exportRowOf(exportId: string) {
  return prisma.labelExport.findUniqueOrThrow({ where: { id: exportId } });
}

describe("GET /api/v1/label-exports", () => {
  const query = "?modelVersion=card-gbm@2026.1&from=2026-01-01&to=2026-02-01&asOf=2026-03-01T00:00:00Z&maturityDays=30";

  it("streams the export to an API token with exports:read, then records it as done with its audit event", async () => {
    const response = await streamRoute.GET(get(`/api/v1/label-exports${query}&format=csv`, asToken(credentials.exporter)), segment({}));
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toBe("text/csv; charset=utf-8; header=present");
    const exportId = response.headers.get("x-label-export-id") ?? "";
    expect(response.headers.get("content-disposition")).toBe(`attachment; filename="label-export-20260301-${exportId}.csv"`);
    const rows = csvObjects(await response.text());
    expect(rows.map((row) => [row.external_id, row.label, row.reviewer_id])).toEqual([
      ["route-0", "1", reviewer.pseudonym],
      ["route-1", "0", reviewer.pseudonym],
    ]);
    await vi.waitFor(async () => expect((await exportRowOf(exportId)).status).toBe("done"));
    const row = await exportRowOf(exportId);
    expect(row).toMatchObject({ rowCount: 2, fileName: null, format: "csv" });
    expect(row.choices).toMatchObject({ modelVersionIds: [version.id], modelVersions: ["card-gbm 2026.1"], asOf: "2026-03-01T00:00:00.000Z", maturityDays: 30 });
    const [event] = await prisma.auditEvent.findMany({ where: { subjectId: exportId } });
    expect(event).toMatchObject({ action: "label_export.generated", actorType: "api_client", actorLabel: "api:retraining-job" });
    expect(event.payload).toMatchObject({ rowCount: 2, format: "csv" });
  });

  it("takes the model version by id too, and serves JSON Lines and Parquet to a signed-in supervisor", async () => {
    const jsonl = await streamRoute.GET(get(`/api/v1/label-exports?modelVersion=${version.id}&from=2026-01-01&asOf=2026-03-01&maturityDays=0&keepInconclusive=true&format=jsonl`, asPerson(credentials.supervisor)), segment({}));
    expect(jsonl.status).toBe(200);
    const lines = (await jsonl.text()).trim().split("\n").map((line) => JSON.parse(line));
    expect(lines.map((line) => [line.external_id, line.label, line.outcome])).toEqual([
      ["route-0", 1, "confirmed_fraud"],
      ["route-1", 0, "legitimate"],
      ["route-2", null, "inconclusive"],
    ]);
    const parquet = await streamRoute.GET(get(`/api/v1/label-exports${query}&format=parquet`, asPerson(credentials.supervisor)), segment({}));
    expect(parquet.headers.get("content-type")).toBe("application/vnd.apache.parquet");
    const bytes = new Uint8Array(await parquet.arrayBuffer());
    // "PAR1" at both ends of a Parquet file.
    expect(new TextDecoder().decode(bytes.slice(0, 4))).toBe("PAR1");
    expect(new TextDecoder().decode(bytes.slice(-4))).toBe("PAR1");
  });

  it("refuses a token without exports:read and an analyst, and answers bad choices with the field", async () => {
    const scorer = await streamRoute.GET(get(`/api/v1/label-exports${query}`, asToken(credentials.scorer)), segment({}));
    expect(scorer.status).toBe(403);
    expect((await scorer.json()).error.message).toContain("exports:read");
    const analyst = await streamRoute.GET(get(`/api/v1/label-exports${query}`, asPerson(credentials.analyst)), segment({}));
    expect(analyst.status).toBe(403);
    const anonymous = await streamRoute.GET(get(`/api/v1/label-exports${query}`, {}), segment({}));
    expect(anonymous.status).toBe(401);

    const unknown = await streamRoute.GET(get("/api/v1/label-exports?modelVersion=card-gbm@9.9&from=2026-01-01", asToken(credentials.exporter)), segment({}));
    expect(unknown.status).toBe(400);
    expect((await unknown.json()).error.issues).toEqual([expect.objectContaining({ path: "modelVersion" })]);
    const badFormat = await streamRoute.GET(get(`/api/v1/label-exports${query}&format=xlsx`, asToken(credentials.exporter)), segment({}));
    expect(badFormat.status).toBe(400);
    expect((await badFormat.json()).error.issues).toEqual([expect.objectContaining({ path: "format" })]);
    const future = await streamRoute.GET(get(`/api/v1/label-exports?modelVersion=${version.id}&from=2026-01-01&asOf=2999-01-01`, asToken(credentials.exporter)), segment({}));
    expect(future.status).toBe(400);
    expect((await future.json()).error.issues).toEqual([expect.objectContaining({ path: "asOf" })]);
  });
});

describe("GET /api/v1/label-exports/[id]/file", () => {
  it("downloads a kept export to people who may see exports and to exports:read tokens, and not to analysts", async () => {
    const supervisor = await prisma.user.findFirstOrThrow({ where: { role: "supervisor" } });
    const started = await createLabelExport(
      { prisma, pool },
      {
        actor: { type: "user", id: supervisor.id, email: supervisor.email, displayName: supervisor.displayName, role: "supervisor", sessionId: null },
        choices: choicesFor(version.id, { asOf: at("2026-03-01T00:00:00Z") }),
        now: new Date(),
        destination: { kind: "file" },
      },
    );
    keptFiles.push(started.fileName ?? "");
    const done = await started.completion;
    for (const headers of [asPerson(credentials.auditor), asToken(credentials.exporter)]) {
      const response = await fileRoute.GET(get(`/api/v1/label-exports/${started.exportId}/file`, headers), segment({ id: started.exportId }));
      expect(response.status).toBe(200);
      expect(response.headers.get("content-length")).toBe(String(done.fileBytes));
      expect(response.headers.get("content-disposition")).toBe(`attachment; filename="${started.fileName}"`);
      const text = await response.text();
      expect(text.split("\r\n")[0]).toBe(LABEL_EXPORT_COLUMNS.join(","));
      expect(csvObjects(text)).toHaveLength(2);
    }
    const analyst = await fileRoute.GET(get(`/api/v1/label-exports/${started.exportId}/file`, asPerson(credentials.analyst)), segment({ id: started.exportId }));
    expect(analyst.status).toBe(403);

    const listed = await listLabelExports(prisma, { now: new Date() });
    expect(listed.find((item) => item.id === started.exportId)).toMatchObject({ status: "done", rowCount: 2, stalled: false, progress: null, fileName: started.fileName });
  });

  it("answers 404 for an unknown export or one streamed without a file, and 409 while one runs", async () => {
    const missing = await fileRoute.GET(get("/api/v1/label-exports/00000000-0000-4000-8000-000000000000/file", asToken(credentials.exporter)), segment({ id: "00000000-0000-4000-8000-000000000000" }));
    expect(missing.status).toBe(404);
    const traversal = await fileRoute.GET(get("/api/v1/label-exports/..%2F..%2Fetc/file", asToken(credentials.exporter)), segment({ id: "../../etc" }));
    expect(traversal.status).toBe(404);
    const streamed = await prisma.labelExport.findFirstOrThrow({ where: { fileName: null, status: "done" } });
    expect((await fileRoute.GET(get(`/api/v1/label-exports/${streamed.id}/file`, asToken(credentials.exporter)), segment({ id: streamed.id }))).status).toBe(404);
    const running = await prisma.labelExport.create({ data: { choices: {}, format: "csv", status: "running", fileName: "label-export-20260301-00000000-0000-4000-8000-000000000001.csv" } });
    expect((await fileRoute.GET(get(`/api/v1/label-exports/${running.id}/file`, asToken(credentials.exporter)), segment({ id: running.id }))).status).toBe(409);
  });
});

describe("the list of exports", () => {
  it("shows progress of a running export and calls one silent for over two minutes stalled", async () => {
    const now = at("2026-07-01T12:00:00Z");
    const moving = await prisma.labelExport.create({ data: { choices: {}, format: "csv", status: "running", requestedAt: now, rowCount: 250, expectedRowCount: 1000, progressAt: new Date(now.getTime() - 5_000) } });
    const silent = await prisma.labelExport.create({ data: { choices: {}, format: "csv", status: "running", requestedAt: new Date(now.getTime() - 600_000), rowCount: 10, expectedRowCount: 1000, progressAt: new Date(now.getTime() - 180_000) } });
    const listed = await listLabelExports(prisma, { now });
    expect(listed.find((item) => item.id === moving.id)).toMatchObject({ progress: 0.25, stalled: false });
    expect(listed.find((item) => item.id === silent.id)).toMatchObject({ stalled: true });
  });
});
