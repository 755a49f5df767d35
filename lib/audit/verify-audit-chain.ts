// Walks the whole audit log in id order and recomputes every hash. The first event whose
// stored prev_hash or hash does not match is reported; otherwise the count and the head hash.
import type { DbOrTx } from "@/lib/db/client";
import { auditEventHash, GENESIS_HASH } from "@/lib/audit/audit-hash";

export type AuditChainReport =
  | { intact: true; verified: number; headHash: string }
  | { intact: false; verified: number; brokenAt: { id: string; action: string; reason: string } };

interface Row {
  id: bigint;
  occurred_at: Date;
  actor_type: string;
  actor_id: string | null;
  actor_label: string;
  action: string;
  subject_type: string | null;
  subject_id: string | null;
  payload: unknown;
  request_id: string | null;
  ip_address: string | null;
  prev_hash: string;
  hash: string;
}

export async function verifyAuditChain(db: DbOrTx, options: { batchSize?: number } = {}): Promise<AuditChainReport> {
  const batchSize = options.batchSize ?? 5000;
  let expectedPrev = GENESIS_HASH;
  let verified = 0;
  let lastId = BigInt(0);
  for (;;) {
    // Keyset paging keeps memory flat however long the log is.
    const rows = await db.$queryRaw<Row[]>`
      SELECT id, occurred_at, actor_type, actor_id, actor_label, action, subject_type, subject_id,
             payload, request_id, ip_address, prev_hash, hash
        FROM audit_events WHERE id > ${lastId} ORDER BY id LIMIT ${batchSize}`;
    if (rows.length === 0) break;
    for (const row of rows) {
      if (row.prev_hash !== expectedPrev) {
        return { intact: false, verified, brokenAt: { id: row.id.toString(), action: row.action, reason: "its prev_hash does not match the hash of the event before it (an event was removed, inserted or reordered)" } };
      }
      const recomputed = auditEventHash(row.prev_hash, {
        occurredAt: row.occurred_at,
        actorType: row.actor_type,
        actorId: row.actor_id,
        actorLabel: row.actor_label,
        action: row.action,
        subjectType: row.subject_type,
        subjectId: row.subject_id,
        payload: row.payload,
        requestId: row.request_id,
        ipAddress: row.ip_address,
      });
      if (recomputed !== row.hash) {
        return { intact: false, verified, brokenAt: { id: row.id.toString(), action: row.action, reason: "its content no longer matches its hash (the event was changed after it was written)" } };
      }
      expectedPrev = row.hash;
      verified += 1;
      lastId = row.id;
    }
  }
  return { intact: true, verified, headHash: expectedPrev };
}
