// Cells shared by the Audit trail screen and each alert's timeline.
import Link from "next/link";
import type { AuditEventView } from "@/lib/audit/find-audit-events";
import { LocalTime } from "@/app/components/local-time";

/** "2026-11-02 09:05:07 UTC": seconds matter in an audit record. */
export function AuditTime({ at }: { at: Date }) {
  const iso = at.toISOString();
  return <LocalTime iso={iso}>{`${iso.slice(0, 19).replace("T", " ")} UTC`}</LocalTime>;
}

const actorKinds = { user: "person", api_client: "API client", system: "system" } as const;

export function AuditActor({ event }: { event: AuditEventView }) {
  return (
    <span title={event.actorId ? `${actorKinds[event.actorType]} ${event.actorId}` : actorKinds[event.actorType]}>
      {event.actorLabel}
      {event.actorType !== "user" && <span className="ml-1 text-2xs text-ink-faint">({actorKinds[event.actorType]})</span>}
    </span>
  );
}

function alertOf(event: AuditEventView): { id: string; label: string } | null {
  const payload = (event.payload ?? {}) as { alertId?: unknown; externalId?: unknown };
  const id = event.subjectType === "alert" && event.subjectId ? event.subjectId : typeof payload.alertId === "string" ? payload.alertId : null;
  if (!id) return null;
  return { id, label: typeof payload.externalId === "string" ? payload.externalId : `${id.slice(0, 8)}…` };
}

export function AuditSubject({ event }: { event: AuditEventView }) {
  const alert = alertOf(event);
  if (alert) {
    return (
      <Link href={`/alerts/${alert.id}`} className="font-mono text-xs text-accent underline-offset-2 hover:underline" title={`alert ${alert.id}`}>
        {alert.label}
      </Link>
    );
  }
  if (!event.subjectType) return <span className="text-ink-faint">—</span>;
  return (
    <span className="text-xs">
      {event.subjectType}
      {event.subjectId && <span className="ml-1 font-mono text-ink-soft">{event.subjectId.length > 24 ? `${event.subjectId.slice(0, 8)}…` : event.subjectId}</span>}
    </span>
  );
}
