// Walks the whole audit log in id order and recomputes every hash. The first event whose
// stored prev_hash or hash does not match is reported; otherwise the count and the head hash.
//
// The chain alone proves that nobody changed or removed an event *in the middle* without
// rewriting everything after it. Someone who can write to the table (a superuser with triggers
// disabled) can still rewrite the tail consistently, or cut it off. What catches that is a head
// hash copied outside the database earlier: pass it as an anchor and the walk reports whether it
// is still in the chain. If it is, every event up to it is exactly as it was when it was copied.
import type { DbOrTx } from "@/lib/db/client";
import { auditEventHash, GENESIS_HASH } from "@/lib/audit/audit-hash";
import { linkStagedAuditEvents } from "@/lib/audit/staged-audit-events";
import { AUDIT_EVENT_COLUMNS, type AuditEventRow } from "@/lib/audit/audit-event-row";

export interface BrokenLink {
  /** The first event that fails, or null when what fails is a missing anchor. */
  id: string | null;
  action: string | null;
  /** The last event that still verified, so a removed stretch shows as a gap between the two. */
  afterId: string | null;
  reason: string;
}

export interface AnchorResult {
  hash: string;
  /** The event whose hash it is, or null when the chain no longer contains it. */
  foundAtId: string | null;
}

export type AuditChainReport =
  | { intact: true; verified: number; headId: string | null; headHash: string; anchors: AnchorResult[] }
  | { intact: false; verified: number; brokenAt: BrokenLink; anchors: AnchorResult[] };

export interface VerifyAuditChainOptions {
  batchSize?: number;
  /** Head hashes recorded outside the database earlier (a ticket, an e-mail, a WORM store). */
  anchors?: string[];
  /**
   * Where an earlier intact walk ended: walk on from there instead of from the first event. Only the
   * events after it are recomputed (and that one event is checked to be still there, unchanged); a
   * change to an event before it is not seen. Not with anchors, which may lie before it.
   */
  resumeFrom?: ChainPoint;
}

/** An event the chain was verified up to: its id and hash, and how many events up to it verified. */
export interface ChainPoint {
  headId: string;
  headHash: string;
  verified: number;
}

export async function verifyAuditChain(db: DbOrTx, options: VerifyAuditChainOptions = {}): Promise<AuditChainReport> {
  // Staged events (lib/audit/staged-audit-events.ts) are linked first, so the report covers them.
  await linkStagedAuditEvents(db);
  const batchSize = options.batchSize ?? 5000;
  const anchors = new Map<string, string | null>((options.anchors ?? []).map((hash) => [hash.trim().toLowerCase(), null]));
  const anchorResults = () => [...anchors].map(([hash, foundAtId]) => ({ hash, foundAtId }));
  let expectedPrev = GENESIS_HASH;
  let verified = 0;
  let lastId: bigint | null = null;
  if (options.resumeFrom) {
    if (anchors.size > 0) throw new Error("verifyAuditChain: anchors need a walk from the first event, not a resumed one");
    const { headId, headHash } = options.resumeFrom;
    const [point] = await db.$queryRaw<{ hash: string; action: string }[]>`SELECT hash, action FROM audit_events WHERE id = ${BigInt(headId)}`;
    if (!point || point.hash !== headHash) {
      return {
        intact: false,
        verified: 0,
        anchors: [],
        brokenAt: {
          id: point ? headId : null,
          action: point?.action ?? null,
          afterId: null,
          reason: point
            ? `event ${headId}, where the last full walk ended, no longer has the hash that walk read (it was changed since)`
            : `event ${headId}, where the last full walk ended, is gone (events were removed since)`,
        },
      };
    }
    expectedPrev = headHash;
    verified = options.resumeFrom.verified;
    lastId = BigInt(headId);
  }
  for (;;) {
    // Keyset paging keeps memory flat however long the log is.
    const rows: AuditEventRow[] = await db.$queryRaw<AuditEventRow[]>`
      SELECT ${AUDIT_EVENT_COLUMNS} FROM audit_events WHERE id > ${lastId ?? BigInt(0)} ORDER BY id LIMIT ${batchSize}`;
    if (rows.length === 0) break;
    for (const row of rows) {
      const afterId = lastId === null ? null : lastId.toString();
      if (row.prev_hash !== expectedPrev) {
        return {
          intact: false,
          verified,
          anchors: anchorResults(),
          brokenAt: {
            id: row.id.toString(),
            action: row.action,
            afterId,
            reason: `its prev_hash does not match the hash of ${afterId === null ? "the start of the chain" : `event ${afterId}`} (an event was removed, inserted or reordered before it)`,
          },
        };
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
        return {
          intact: false,
          verified,
          anchors: anchorResults(),
          brokenAt: { id: row.id.toString(), action: row.action, afterId, reason: "its content no longer matches its hash (the event was changed after it was written)" },
        };
      }
      if (anchors.has(row.hash)) anchors.set(row.hash, row.id.toString());
      expectedPrev = row.hash;
      verified += 1;
      lastId = row.id;
    }
  }
  const missing = [...anchors].find(([, foundAtId]) => foundAtId === null);
  if (missing) {
    return {
      intact: false,
      verified,
      anchors: anchorResults(),
      brokenAt: {
        id: null,
        action: null,
        afterId: lastId === null ? null : lastId.toString(),
        reason: `the head hash ${missing[0]} kept outside the database is no longer in the chain (events up to that point were rewritten or removed)`,
      },
    };
  }
  return { intact: true, verified, headId: lastId === null ? null : lastId.toString(), headHash: expectedPrev, anchors: anchorResults() };
}

/** The report in one line, as `npm run audit:verify` prints it and a ticket can quote it. */
export function describeAuditChainReport(report: AuditChainReport): string {
  if (report.intact) return `verified ${report.verified} events, head hash ${report.headHash}`;
  const { brokenAt } = report;
  const where = brokenAt.id === null ? "missing anchor" : `broken link at event ${brokenAt.id} (${brokenAt.action})`;
  return `${where}: ${brokenAt.reason}; ${report.verified} events before it verified`;
}
