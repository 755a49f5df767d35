// One line per audit event for the trail and the alert timeline: a readable name for the action
// and a summary of its payload. Pure. A payload that does not match its action's schema (an
// action written by an older version, say) falls back to its plain values rather than failing.
import { auditEventSchema } from "@/lib/audit/schemas";

/** "second_review.overturned" → "Second review overturned". */
export function auditActionLabel(action: string): string {
  const words = action.replace(/[._]/g, " ").trim();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

const outcomeWords: Record<string, string> = { confirmed_fraud: "confirmed fraud", legitimate: "legitimate", inconclusive: "inconclusive" };

function minutes(seconds: number): string {
  return seconds < 90 ? `${seconds} s` : `${Math.round(seconds / 60)} min`;
}

function utcTime(iso: string): string {
  const date = new Date(iso);
  return Number.isNaN(date.getTime()) ? iso : `${date.toISOString().slice(0, 16).replace("T", " ")} UTC`;
}

function plainValues(payload: unknown): string {
  if (payload === null || typeof payload !== "object") return payload === null || payload === undefined ? "" : String(payload);
  return Object.entries(payload as Record<string, unknown>)
    .map(([key, value]) => `${key}=${typeof value === "object" && value !== null ? JSON.stringify(value) : String(value)}`)
    .join(", ");
}

function changedKeys(before: unknown, after: unknown): string[] {
  if (!before || !after || typeof before !== "object" || typeof after !== "object") return [];
  const keys = new Set([...Object.keys(before), ...Object.keys(after)]);
  return [...keys].filter((key) => JSON.stringify((before as Record<string, unknown>)[key]) !== JSON.stringify((after as Record<string, unknown>)[key])).sort();
}

function filterText(filter: Record<string, unknown>): string {
  const parts = Object.entries(filter).map(([key, value]) => `${key} ${String(value)}`);
  return parts.length > 0 ? parts.join(", ") : "no filter";
}

const MAX_LENGTH = 200;

export function summarizeAuditPayload(action: string, payload: unknown): string {
  const parsed = auditEventSchema.safeParse({ action, payload });
  const text = parsed.success ? describe(parsed.data) : plainValues(payload);
  return text.length > MAX_LENGTH ? `${text.slice(0, MAX_LENGTH - 1)}…` : text;
}

function describe(event: ReturnType<typeof auditEventSchema.parse>): string {
  switch (event.action) {
    case "session.signed_in":
      return "signed in";
    case "session.sign_in_failed":
      return `${event.payload.email}: ${event.payload.reason}`;
    case "session.signed_out":
      return event.payload.reason;
    case "session.locked_out":
      return `${event.payload.scope} ${event.payload.email} locked until ${utcTime(event.payload.until)}`;
    case "user.created":
      return `${event.payload.email} as ${event.payload.role}`;
    case "user.role_changed":
      return `${event.payload.from} → ${event.payload.to}`;
    case "user.deactivated":
      return `${event.payload.endedSessions} open session(s) ended`;
    case "user.reactivated":
    case "user.password_changed":
      return "";
    case "user.refused":
      return `needs ${event.payload.permission}: ${event.payload.target}`;
    case "api_client.created":
      return `${event.payload.name} with ${event.payload.scopes.join(", ")}`;
    case "api_client.revoked":
      return event.payload.name;
    case "api_client.refused":
      return `${event.payload.reason}: ${event.payload.path}`;
    case "ingest.batch_received": {
      const p = event.payload;
      return `${p.kind} by ${p.channel}: ${p.rows} rows, ${p.accepted} accepted, ${p.duplicate} duplicate, ${p.conflict} conflicting, ${p.rejected} rejected`;
    }
    case "model_version.saved": {
      const p = event.payload;
      const summary = `${p.modelName} ${p.version}: ${Object.keys(p.changes).sort().join(", ") || "no changes"}`;
      return p.recomputedAlerts ? `${summary} · ${p.recomputedAlerts} waiting alerts re-derived` : summary;
    }
    case "alert.claimed":
      return `${event.payload.externalId} ${event.payload.how === "take_next" ? "taken as next" : "opened directly"}, lease until ${utcTime(event.payload.leaseExpiresAt)}`;
    case "alert.released":
      return `${event.payload.externalId}: ${event.payload.reason}`;
    case "alert.lease_expired":
      return `${event.payload.externalId} returned to the queue`;
    case "alert.reassigned":
      return `${event.payload.externalId} reassigned`;
    case "outcome.recorded": {
      const p = event.payload;
      const parts = [`${p.externalId}: ${outcomeWords[p.outcome]}`, `"${p.reason}"`, p.round === 2 ? "second review" : "first review", `handled in ${minutes(p.handlingSeconds)}`];
      if (p.sentToSecondReview) parts.push("sent to second review");
      if (p.origin === "imported") parts.push("imported");
      return parts.join(" · ");
    }
    case "second_review.confirmed":
    case "second_review.overturned":
      return `${event.payload.externalId}: ${outcomeWords[event.payload.firstOutcome]} → ${outcomeWords[event.payload.secondOutcome]}`;
    case "label.received":
      return `${event.payload.externalId}: ${event.payload.label} from ${event.payload.source}${event.payload.matched ? "" : " (no alert yet)"}`;
    case "calibration.refit": {
      const p = event.payload;
      return `${p.labelCount} labels, Brier ${p.brierScore.toFixed(4)}, ${p.recomputedAlerts} alerts recomputed (${p.trigger.replace("_", " ")})`;
    }
    case "settings.changed": {
      const keys = changedKeys(event.payload.before, event.payload.after);
      return `${event.payload.key}${keys.length > 0 ? `: ${keys.join(", ")}` : ""}`;
    }
    case "label_export.generated":
      return `${event.payload.rowCount} rows as ${event.payload.format}`;
    case "audit.viewed":
      return filterText(event.payload.filter);
    case "audit.exported":
      return `${event.payload.rowCount} rows (${filterText(event.payload.filter)})`;
    default: {
      // A new action added to the union shows its plain values until it gets a sentence here.
      const unknownEvent: { payload: unknown } = event;
      return plainValues(unknownEvent.payload);
    }
  }
}
