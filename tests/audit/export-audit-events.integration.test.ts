import { beforeAll, describe, expect, it } from "vitest";
import { auditEventHash, GENESIS_HASH } from "@/lib/audit/audit-hash";
import { AUDIT_CSV_COLUMNS, exportAuditEvents } from "@/lib/audit/export-audit-events";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlerts, createUser, recordSettingsEvents } from "@/tests/audit/audit-fixtures";
import { readCsv } from "@/tests/audit/csv-reader";

const database = await useTestDatabase();
const { prisma, pool } = database;

let auditor: Awaited<ReturnType<typeof createUser>>;
let reviewer: Awaited<ReturnType<typeof createUser>>;
let alert: { id: string; externalId: string };
const awkwardReason = 'said "not me", then\r\nremembered, the trip';

beforeAll(async () => {
  auditor = await createUser(pool, { email: "ira.auditor@example.org", role: "auditor" });
  reviewer = await createUser(pool, { email: "kim.reviewer@example.org" });
  [alert] = await createAlerts(pool, 1, "EXP");
  await recordSettingsEvents(prisma, reviewer.actor, 2);
  await prisma.$transaction((tx) =>
    recordAuditEvent(tx, {
      actor: reviewer.actor,
      subject: { type: "alert", id: alert.id },
      context: { requestId: "req,with,commas", ipAddress: "203.0.113.9" },
      event: {
        action: "outcome.recorded",
        payload: { alertId: alert.id, externalId: alert.externalId, outcome: "legitimate", reason: awkwardReason, round: 1, handlingSeconds: 95, origin: "screen", sentToSecondReview: false },
      },
    }),
  );
});

async function readAll(stream: ReadableStream<Uint8Array>): Promise<string> {
  return new Response(stream).text();
}

function rowObject(header: string[], row: string[]): Record<string, string> {
  return Object.fromEntries(header.map((name, index) => [name, row[index]]));
}

describe("CSV export of the audit trail", () => {
  it("writes RFC 4180 with every stored column, and each row's hash can be recomputed from the file alone", async () => {
    const exported = await exportAuditEvents(prisma, { actor: auditor.actor, filter: {}, batchSize: 2 });
    const text = await readAll(exported.stream);
    const [header, ...rows] = readCsv(text);
    expect(header).toEqual([...AUDIT_CSV_COLUMNS]);
    expect(rows).toHaveLength(exported.rowCount);
    expect(exported.rowCount).toBe(3);
    expect(exported.contentType).toBe("text/csv; charset=utf-8; header=present");
    expect(exported.fileName).toMatch(/^audit-trail-\d{4}-\d{2}-\d{2}-\d{6}Z\.csv$/);

    let prev = GENESIS_HASH;
    for (const row of rows.map((values) => rowObject(header, values))) {
      expect(row.prev_hash).toBe(prev);
      const empty = (value: string) => (value === "" ? null : value);
      const recomputed = auditEventHash(row.prev_hash, {
        occurredAt: new Date(row.occurred_at),
        actorType: row.actor_type,
        actorId: empty(row.actor_id),
        actorLabel: row.actor_label,
        action: row.action,
        subjectType: empty(row.subject_type),
        subjectId: empty(row.subject_id),
        payload: JSON.parse(row.payload),
        requestId: empty(row.request_id),
        ipAddress: empty(row.ip_address),
      });
      expect(recomputed).toBe(row.hash);
      prev = row.hash;
    }
    const outcome = rowObject(header, rows[2]);
    expect(JSON.parse(outcome.payload).reason).toBe(awkwardReason);
    expect(outcome.request_id).toBe("req,with,commas");
    expect(text).toContain('"req,with,commas"');
  });

  it("is itself recorded, with its filter, row count and the newest event it could contain, before any row is read", async () => {
    const exported = await exportAuditEvents(prisma, { actor: auditor.actor, filter: { actor: reviewer.email, action: "outcome.recorded" }, context: { requestId: "req-export", ipAddress: "198.51.100.4" } });
    const { rows } = await pool.query("SELECT actor_id, action, payload, request_id FROM audit_events WHERE id = $1", [exported.exportEventId]);
    expect(rows[0]).toEqual({
      actor_id: auditor.id,
      action: "audit.exported",
      request_id: "req-export",
      payload: { filter: { actor: reviewer.email, action: "outcome.recorded" }, rowCount: 1, throughEventId: exported.throughEventId, format: "csv" },
    });
    expect(BigInt(exported.throughEventId!)).toBeLessThan(BigInt(exported.exportEventId));
    const [, ...dataRows] = readCsv(await readAll(exported.stream));
    expect(dataRows).toHaveLength(1);
  });

  it("contains exactly the events that existed when it started, however many arrive while it streams", async () => {
    const exported = await exportAuditEvents(prisma, { actor: auditor.actor, filter: { actor: reviewer.email }, batchSize: 1 });
    await recordSettingsEvents(prisma, reviewer.actor, 3);
    const [, ...rows] = readCsv(await readAll(exported.stream));
    expect(rows).toHaveLength(exported.rowCount);
    expect(rows.every((row) => BigInt(row[0]) <= BigInt(exported.throughEventId!))).toBe(true);
  });

  it("an empty result is a header and nothing else, and is still recorded", async () => {
    const exported = await exportAuditEvents(prisma, { actor: auditor.actor, filter: { alert: "NOTHING-HERE" } });
    expect(await readAll(exported.stream)).toBe(`${AUDIT_CSV_COLUMNS.join(",")}\r\n`);
    expect(exported.rowCount).toBe(0);
    expect(await prisma.auditEvent.count({ where: { id: BigInt(exported.exportEventId), action: "audit.exported" } })).toBe(1);
  });
});
