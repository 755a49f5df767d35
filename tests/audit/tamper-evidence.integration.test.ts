import { describe, expect, it } from "vitest";
import { auditEventHash } from "@/lib/audit/audit-hash";
import { verifyAuditChain } from "@/lib/audit/verify-audit-chain";
import { useTestDatabase, type TestDatabase } from "@/tests/support/test-database";
import { createUser, recordSettingsEvents, withTriggersDisabled } from "@/tests/audit/audit-fixtures";

// Each scenario breaks its own database, so one tampering cannot hide or cause another's finding.
async function chainOfTen(): Promise<{ database: TestDatabase; ids: string[]; headHash: string }> {
  const database = await useTestDatabase();
  const admin = await createUser(database.pool, { role: "admin" });
  const ids = (await recordSettingsEvents(database.prisma, admin.actor, 10)).map(String);
  const report = await verifyAuditChain(database.prisma);
  if (!report.intact) throw new Error("the fresh chain should verify");
  return { database, ids, headHash: report.headHash };
}

const edited = await chainOfTen();
const removed = await chainOfTen();
const rehashed = await chainOfTen();
const forged = await chainOfTen();
const cut = await chainOfTen();
const rewritten = await chainOfTen();

async function row(database: TestDatabase, id: string) {
  const { rows } = await database.pool.query("SELECT * FROM audit_events WHERE id = $1", [id]);
  return rows[0];
}

describe("tampering with the audit log is found by verify", () => {
  it("names the event whose payload was changed with the triggers switched off", async () => {
    const { database, ids } = edited;
    const original = (await row(database, ids[4])).payload;
    await withTriggersDisabled(database.pool, `UPDATE audit_events SET payload = jsonb_set(payload, '{after,step}', '99') WHERE id = $1`, [ids[4]]);

    const report = await verifyAuditChain(database.prisma);
    expect(report).toMatchObject({
      intact: false,
      verified: 4,
      brokenAt: { id: ids[4], action: "settings.changed", afterId: ids[3], reason: expect.stringContaining("no longer matches its hash") },
    });

    // Putting the original bytes back makes it verify again: the finding is about content, not about the edit itself.
    await withTriggersDisabled(database.pool, "UPDATE audit_events SET payload = $2 WHERE id = $1", [ids[4], original]);
    expect(await verifyAuditChain(database.prisma)).toMatchObject({ intact: true, verified: 10 });
  });

  it("names the event after a gap when an event in the middle was deleted", async () => {
    const { database, ids } = removed;
    await withTriggersDisabled(database.pool, "DELETE FROM audit_events WHERE id = $1", [ids[5]]);

    const report = await verifyAuditChain(database.prisma);
    expect(report).toMatchObject({
      intact: false,
      verified: 5,
      brokenAt: { id: ids[6], afterId: ids[4], reason: expect.stringContaining(`does not match the hash of event ${ids[4]}`) },
    });
  });

  it("names the next event when a changed event was given a freshly computed hash of its own", async () => {
    const { database, ids } = rehashed;
    const target = await row(database, ids[2]);
    const payload = { ...target.payload, after: { step: 1000 } };
    const hash = auditEventHash(target.prev_hash, {
      occurredAt: target.occurred_at,
      actorType: target.actor_type,
      actorId: target.actor_id,
      actorLabel: target.actor_label,
      action: target.action,
      subjectType: target.subject_type,
      subjectId: target.subject_id,
      payload,
      requestId: target.request_id,
      ipAddress: target.ip_address,
    });
    await withTriggersDisabled(database.pool, "UPDATE audit_events SET payload = $2, hash = $3 WHERE id = $1", [ids[2], payload, hash]);

    const report = await verifyAuditChain(database.prisma);
    expect(report).toMatchObject({ intact: false, verified: 3, brokenAt: { id: ids[3], afterId: ids[2] } });
  });

  it("names an event inserted directly, around recordAuditEvent, with a made-up hash", async () => {
    const { database, ids, headHash } = forged;
    const { rows } = await database.pool.query<{ id: string }>(
      `INSERT INTO audit_events (actor_type, actor_id, actor_label, action, payload, prev_hash, hash)
       VALUES ('system', NULL, 'nobody', 'settings.changed', '{}', $1, repeat('f', 64)) RETURNING id::text`,
      [headHash],
    );
    const report = await verifyAuditChain(database.prisma);
    expect(report).toMatchObject({ intact: false, verified: ids.length, brokenAt: { id: rows[0].id, afterId: ids[9] } });
  });
});

describe("a head hash kept outside the database catches what the chain alone cannot", () => {
  it("a cut-off tail still walks cleanly, but yesterday's head hash is no longer in it", async () => {
    const { database, ids, headHash } = cut;
    await withTriggersDisabled(database.pool, "DELETE FROM audit_events WHERE id >= $1", [ids[7]]);

    // The walk alone cannot tell: the remaining events form a perfect chain.
    expect(await verifyAuditChain(database.prisma)).toMatchObject({ intact: true, verified: 7, headId: ids[6] });
    expect(await verifyAuditChain(database.prisma, { anchors: [headHash] })).toMatchObject({
      intact: false,
      verified: 7,
      brokenAt: { id: null, afterId: ids[6], reason: expect.stringContaining(headHash) },
      anchors: [{ hash: headHash, foundAtId: null }],
    });
  });

  it("a consistently rewritten tail walks cleanly, but the anchor exposes it; an older anchor still holds", async () => {
    const { database, ids, headHash } = rewritten;
    const olderAnchor = (await row(database, ids[5])).hash as string;
    const last = await row(database, ids[9]);
    const payload = { key: "queue", before: { step: 9 }, after: { step: 0 } };
    const hash = auditEventHash(last.prev_hash, {
      occurredAt: last.occurred_at,
      actorType: last.actor_type,
      actorId: last.actor_id,
      actorLabel: last.actor_label,
      action: last.action,
      subjectType: last.subject_type,
      subjectId: last.subject_id,
      payload,
      requestId: last.request_id,
      ipAddress: last.ip_address,
    });
    await withTriggersDisabled(database.pool, "UPDATE audit_events SET payload = $2, hash = $3 WHERE id = $1", [ids[9], payload, hash]);

    expect(await verifyAuditChain(database.prisma)).toMatchObject({ intact: true, verified: 10 });
    const report = await verifyAuditChain(database.prisma, { anchors: [olderAnchor, headHash.toUpperCase()] });
    expect(report.intact).toBe(false);
    expect(report.anchors).toEqual([
      { hash: olderAnchor, foundAtId: ids[5] },
      { hash: headHash, foundAtId: null },
    ]);
  });
});
