import { createHash } from "node:crypto";
import { canonicalJson } from "@/lib/audit/canonical-json";

export const GENESIS_HASH = "0".repeat(64);

/** The fields that the hash covers; everything an auditor relies on is in it. */
export interface HashedAuditFields {
  occurredAt: Date;
  actorType: string;
  actorId: string | null;
  actorLabel: string;
  action: string;
  subjectType: string | null;
  subjectId: string | null;
  payload: unknown;
  requestId: string | null;
  ipAddress: string | null;
}

/** SHA-256 (FIPS 180-4) of the previous hash followed by the event's canonical JSON, hex encoded. */
export function auditEventHash(prevHash: string, event: HashedAuditFields): string {
  const body = canonicalJson({
    occurredAt: event.occurredAt.toISOString(),
    actorType: event.actorType,
    actorId: event.actorId,
    actorLabel: event.actorLabel,
    action: event.action,
    subjectType: event.subjectType,
    subjectId: event.subjectId,
    payload: event.payload,
    requestId: event.requestId,
    ipAddress: event.ipAddress,
  });
  return createHash("sha256").update(prevHash).update(body).digest("hex");
}
