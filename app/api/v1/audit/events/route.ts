// GET /api/v1/audit/events — audit events by actor, action, alert, time range or preset (the Audit trail's filters), newest first with keyset paging; format=csv streams the whole filtered view as a recorded export.
import { db } from "@/lib/db/client";
import { auditActorOf } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors";
import { apiRoute } from "@/lib/http/api-route";
import { auditQueryString, compactAuditFilter, parseAuditQuery } from "@/lib/audit/audit-query";
import { exportAuditEvents } from "@/lib/audit/export-audit-events";
import { findAuditEvents } from "@/lib/audit/find-audit-events";
import { recordAuditView } from "@/lib/audit/record-audit-view";

export const GET = apiRoute("GET /api/v1/audit/events", async (request, { actor, context, now }) => {
  const params = request.nextUrl.searchParams;
  const format = params.get("format") ?? "json";
  if (format !== "json" && format !== "csv") {
    throw new AppError("invalid_input", "format: json or csv", [{ path: "format", message: "json or csv" }]);
  }
  const { filter, page } = parseAuditQuery(params);

  if (format === "csv") {
    const exported = await exportAuditEvents(db(), { actor: auditActorOf(actor), filter, context, now });
    return new Response(exported.stream, {
      headers: {
        "content-type": exported.contentType,
        "content-disposition": `attachment; filename="${exported.fileName}"`,
        "x-audit-row-count": String(exported.rowCount),
        "x-audit-export-event": exported.exportEventId,
      },
    });
  }

  const result = await findAuditEvents(db(), { filter, page });
  await recordAuditView(db(), { actor: auditActorOf(actor), filter, context });
  const link = (paging: { before?: string; after?: string }) => `/api/v1/audit/events${auditQueryString(filter, { ...paging, limit: page.limit })}`;
  return {
    filter: compactAuditFilter(filter),
    matched: result.matched,
    resolved: {
      actors: result.resolved.actor?.known ?? null,
      alerts: result.resolved.alert?.known ?? null,
    },
    events: result.events,
    links: {
      newest: link({}),
      newer: result.newerCursor ? link({ after: result.newerCursor }) : null,
      older: result.olderCursor ? link({ before: result.olderCursor }) : null,
      csv: `/api/v1/audit/events${auditQueryString(filter, {}, { format: "csv" })}`,
    },
  };
});
