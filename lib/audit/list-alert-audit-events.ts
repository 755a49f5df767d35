// One alert's own history, oldest first, for the timeline on the Alert page. The same matching
// as the trail's alert filter: the alert as subject, its id in the payload, or a label received
// for its external id (labels can arrive before the alert does).
import type { DbOrTx } from "@/lib/db/client";
import { resolveAuditFilter, selectAuditEvents, type AuditEventView } from "@/lib/audit/find-audit-events";
import { linkStagedAuditEvents } from "@/lib/audit/staged-audit-events";

export interface ListAlertAuditEventsOptions {
  alertId: string;
  /** The timeline shows the first `limit` events and says when there are more. */
  limit?: number;
}

export async function listAlertAuditEvents(db: DbOrTx, options: ListAlertAuditEventsOptions): Promise<{ events: AuditEventView[]; more: boolean }> {
  const limit = options.limit ?? 200;
  await linkStagedAuditEvents(db);
  const resolved = await resolveAuditFilter(db, { alert: options.alertId });
  const rows = await selectAuditEvents(db, resolved, { order: "asc", limit: limit + 1 });
  return { events: rows.slice(0, limit), more: rows.length > limit };
}
