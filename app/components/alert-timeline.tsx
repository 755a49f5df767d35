// One alert's history from the audit trail, oldest first, for the Alert page:
//   <AlertTimeline alertId={alert.id} />
// A server component; the page that renders it has already checked that the person may see the alert.
import Link from "next/link";
import { db } from "@/lib/db/client";
import { listAlertAuditEvents } from "@/lib/audit/list-alert-audit-events";
import { auditActionLabel, summarizeAuditPayload } from "@/lib/audit/summarize-audit-event";
import { AuditActor, AuditTime } from "@/app/components/audit-event-parts";

export async function AlertTimeline({ alertId, limit = 200 }: { alertId: string; limit?: number }) {
  const { events, more } = await listAlertAuditEvents(db(), { alertId, limit });
  return (
    <section aria-labelledby={`timeline-${alertId}`} className="space-y-2">
      <h2 id={`timeline-${alertId}`} className="text-sm font-semibold">
        Timeline
      </h2>
      {events.length === 0 ? (
        <p className="text-sm text-ink-soft">Nothing has been recorded for this alert yet.</p>
      ) : (
        <ol className="space-y-1 border-l-2 border-rule pl-3 text-sm">
          {events.map((event) => {
            const summary = summarizeAuditPayload(event.action, event.payload);
            return (
              <li key={event.id} className="relative">
                <span aria-hidden className="absolute -left-[1.1rem] top-1.5 h-2 w-2 rounded-full bg-accent" />
                <div className="flex flex-wrap items-baseline gap-x-2">
                  <span className="text-xs text-ink-soft">
                    <AuditTime at={event.occurredAt} />
                  </span>
                  <span className="font-medium">{auditActionLabel(event.action)}</span>
                  <span className="text-xs text-ink-soft">
                    by <AuditActor event={event} />
                  </span>
                </div>
                {summary && <p className="text-xs text-ink-soft">{summary}</p>}
              </li>
            );
          })}
        </ol>
      )}
      {more && (
        <p className="text-xs text-ink-soft">
          Showing the first {limit} events.{" "}
          <Link className="text-accent underline" href={`/audit?alert=${encodeURIComponent(alertId)}`}>
            See all in the audit trail
          </Link>{" "}
          (auditors, supervisors and admins).
        </p>
      )}
    </section>
  );
}
