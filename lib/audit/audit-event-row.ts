// A stored audit event as PostgreSQL returns it, and the column list that reads it: shared by the
// trail's readers (find-audit-events.ts) and the chain walk (verify-audit-chain.ts), so a column
// added to audit_events is added to both at once.
import { Prisma } from "@/lib/generated/prisma/client";

export interface AuditEventRow {
  id: bigint;
  occurred_at: Date;
  actor_type: "user" | "api_client" | "system";
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

export const AUDIT_EVENT_COLUMNS = Prisma.sql`id, occurred_at, actor_type, actor_id, actor_label, action, subject_type, subject_id, payload, request_id, ip_address, prev_hash, hash`;
