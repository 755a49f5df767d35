// The chain check of the Audit trail screen. A full walk recomputes every hash since the first
// event: about 6.5 µs of hashing per event in Node plus reading it, so seconds per million events,
// and a year of a busy desk's trail is millions (every claim, outcome and view is an event). The
// screen therefore walks in full at most once per FULL_WALK_EVERY_MS in each server process and, in
// between, walks on from where the last full walk ended; it says which it did and when the full walk
// was, and offers a full walk on request. `npm run audit:verify` and GET /api/v1/audit/verify always
// walk in full.
import type { DbOrTx } from "@/lib/db/client";
import { verifyAuditChain, type AuditChainReport, type ChainPoint } from "@/lib/audit/verify-audit-chain";

export const FULL_WALK_EVERY_MS = 60 * 60_000;

export type AuditChainStatus = AuditChainReport & {
  /** When the events up to `resumedAfterId` were last walked in full; equal to `checkedAt` for a full walk. */
  fullWalkAt: Date;
  /** Null for a full walk; else the event the walk resumed after. */
  resumedAfterId: string | null;
  /** Events whose hashes this check recomputed. */
  walkedNow: number;
  checkedAt: Date;
};

// Per process: where the last intact full walk ended, and when it ran.
let lastFullWalk: (ChainPoint & { at: Date }) | null = null;

export async function checkAuditChainForScreen(db: DbOrTx, options: { now: Date; full?: boolean }): Promise<AuditChainStatus> {
  const { now } = options;
  const from = !options.full && lastFullWalk && now.getTime() - lastFullWalk.at.getTime() < FULL_WALK_EVERY_MS ? lastFullWalk : null;
  if (from) {
    const report = await verifyAuditChain(db, { resumeFrom: from });
    // A resumed walk that finds the chain broken says so; the next view walks in full.
    if (!report.intact) lastFullWalk = null;
    return { ...report, fullWalkAt: from.at, resumedAfterId: from.headId, walkedNow: Math.max(0, report.verified - from.verified), checkedAt: now };
  }
  const report = await verifyAuditChain(db);
  lastFullWalk = report.intact && report.headId !== null ? { headId: report.headId, headHash: report.headHash, verified: report.verified, at: now } : null;
  return { ...report, fullWalkAt: now, resumedAfterId: null, walkedNow: report.verified, checkedAt: now };
}

/** Forgets the last full walk (tests). */
export function forgetLastFullWalk(): void {
  lastFullWalk = null;
}
