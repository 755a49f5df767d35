// Every audit event's payload is typed by its action. Add a new action here (and only here)
// before writing it; recordAuditEvent() refuses payloads that do not match.
import { z } from "zod";

const alertRef = { alertId: z.string().uuid(), externalId: z.string() };
const outcomeValue = z.enum(["confirmed_fraud", "legitimate", "inconclusive"]);

export const auditEventSchema = z.discriminatedUnion("action", [
  z.object({ action: z.literal("session.signed_in"), payload: z.object({ sessionId: z.string() }) }),
  z.object({ action: z.literal("session.sign_in_failed"), payload: z.object({ email: z.string(), reason: z.string() }) }),
  z.object({ action: z.literal("session.signed_out"), payload: z.object({ sessionId: z.string(), reason: z.string() }) }),
  z.object({ action: z.literal("session.locked_out"), payload: z.object({ email: z.string(), until: z.string(), scope: z.enum(["account", "address"]) }) }),
  z.object({ action: z.literal("user.created"), payload: z.object({ email: z.string(), role: z.string() }) }),
  z.object({ action: z.literal("user.role_changed"), payload: z.object({ from: z.string(), to: z.string() }) }),
  z.object({ action: z.literal("user.deactivated"), payload: z.object({ endedSessions: z.number().int() }) }),
  z.object({ action: z.literal("user.reactivated"), payload: z.object({}) }),
  z.object({ action: z.literal("user.password_changed"), payload: z.object({}) }),
  z.object({ action: z.literal("user.refused"), payload: z.object({ permission: z.string(), target: z.string() }) }),
  z.object({ action: z.literal("api_client.created"), payload: z.object({ name: z.string(), scopes: z.array(z.string()) }) }),
  z.object({ action: z.literal("api_client.revoked"), payload: z.object({ name: z.string() }) }),
  z.object({ action: z.literal("api_client.refused"), payload: z.object({ reason: z.string(), path: z.string() }) }),
  z.object({
    action: z.literal("ingest.batch_received"),
    payload: z.object({
      kind: z.enum(["alerts", "labels", "outcomes"]),
      channel: z.string(),
      rows: z.number().int(),
      accepted: z.number().int(),
      duplicate: z.number().int(),
      conflict: z.number().int(),
      rejected: z.number().int(),
    }),
  }),
  z.object({
    action: z.literal("model_version.saved"),
    // recomputedAlerts: waiting alerts re-derived by the save (β or prior hit rate changed); absent in events saved before it was recorded.
    payload: z.object({ modelName: z.string(), version: z.string(), changes: z.record(z.string(), z.unknown()), recomputedAlerts: z.number().int().optional() }),
  }),
  z.object({ action: z.literal("alert.claimed"), payload: z.object({ ...alertRef, leaseExpiresAt: z.string(), how: z.enum(["take_next", "direct"]) }) }),
  z.object({ action: z.literal("alert.released"), payload: z.object({ ...alertRef, reason: z.string() }) }),
  z.object({ action: z.literal("alert.lease_expired"), payload: z.object({ ...alertRef, heldBy: z.string().uuid() }) }),
  z.object({ action: z.literal("alert.reassigned"), payload: z.object({ ...alertRef, from: z.string().uuid().nullable(), to: z.string().uuid() }) }),
  z.object({
    action: z.literal("outcome.recorded"),
    payload: z.object({ ...alertRef, outcome: outcomeValue, reason: z.string(), round: z.number().int(), handlingSeconds: z.number().int(), origin: z.enum(["screen", "imported"]), sentToSecondReview: z.boolean() }),
  }),
  z.object({
    action: z.literal("second_review.confirmed"),
    payload: z.object({ ...alertRef, firstOutcome: outcomeValue, secondOutcome: outcomeValue }),
  }),
  z.object({
    action: z.literal("second_review.overturned"),
    payload: z.object({ ...alertRef, firstOutcome: outcomeValue, secondOutcome: outcomeValue }),
  }),
  z.object({ action: z.literal("label.received"), payload: z.object({ externalId: z.string(), label: z.enum(["fraud", "genuine"]), source: z.string(), matched: z.boolean() }) }),
  z.object({
    action: z.literal("calibration.refit"),
    payload: z.object({ modelVersionId: z.string().uuid(), calibrationMapId: z.string().uuid(), labelCount: z.number().int(), brierScore: z.number(), recomputedAlerts: z.number().int(), trigger: z.enum(["on_demand", "automatic"]) }),
  }),
  z.object({ action: z.literal("settings.changed"), payload: z.object({ key: z.string(), before: z.unknown(), after: z.unknown() }) }),
  z.object({ action: z.literal("label_export.generated"), payload: z.object({ exportId: z.string().uuid(), choices: z.record(z.string(), z.unknown()), rowCount: z.number().int(), format: z.string() }) }),
  z.object({ action: z.literal("audit.viewed"), payload: z.object({ filter: z.record(z.string(), z.unknown()) }) }),
  // throughEventId: the newest event the export could contain, so the same file can be produced again.
  z.object({ action: z.literal("audit.exported"), payload: z.object({ filter: z.record(z.string(), z.unknown()), rowCount: z.number().int(), throughEventId: z.string().nullable(), format: z.literal("csv") }) }),
]);

export type AuditEventInput = z.infer<typeof auditEventSchema>;
export type AuditAction = AuditEventInput["action"];
/** Every action that can be written, in the order of the union above. */
export const auditActions: readonly AuditAction[] = auditEventSchema.options.map((option) => option.shape.action.value);

export const auditActorSchema = z.object({
  type: z.enum(["user", "api_client", "system"]),
  id: z.string().nullable(),
  label: z.string().min(1),
});
export type AuditActor = z.infer<typeof auditActorSchema>;

export interface AuditContext {
  requestId?: string | null;
  ipAddress?: string | null;
}

// ---- Questions asked of the trail (the Audit trail screen, GET /api/v1/audit/events, the CSV export).

/** The actions by which a person clears an alert: the first outcome and the second review. */
export const clearingActions = ["outcome.recorded", "second_review.confirmed", "second_review.overturned"] as const;

/** Named questions, each one filter: "who cleared this alert" and "what did this reviewer clear". */
export const auditPresets = {
  cleared_alert: "Who cleared this alert",
  cleared_by: "What this reviewer cleared",
} as const;
export type AuditPreset = keyof typeof auditPresets;

const blankToUndefined = (value: unknown) => (typeof value === "string" && value.trim() === "" ? undefined : value);
const optionalText = (max: number) => z.preprocess(blankToUndefined, z.string().trim().max(max, `at most ${max} characters`).optional());
// A UTC calendar day (what a date input sends) or an instant with its offset (for API callers).
const optionalInstant = z.preprocess(
  blankToUndefined,
  z
    .string()
    .trim()
    .refine((value) => /^\d{4}-\d{2}-\d{2}$/.test(value) || /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d{1,6})?)?(Z|[+-]\d{2}:\d{2})$/.test(value), {
      message: "a date as YYYY-MM-DD (a UTC day) or a time as ISO 8601 with Z or an offset",
      abort: true,
    })
    .refine(
      (value) => {
        // Date.parse() rolls 2026-02-30 over into March; a calendar day must survive the round trip.
        const day = value.slice(0, 10);
        const start = new Date(`${day}T00:00:00Z`);
        return !Number.isNaN(start.getTime()) && start.toISOString().slice(0, 10) === day && !Number.isNaN(Date.parse(value));
      },
      { message: "not a real date" },
    )
    .optional(),
);

export const auditFilterSchema = z
  .object({
    /** An e-mail, an API client's name, a system actor's label, or an actor id. */
    actor: optionalText(320),
    /** An action (outcome.recorded) or a family of actions (second_review.* or second_review). */
    action: z.preprocess(
      blankToUndefined,
      z
        .string()
        .trim()
        .regex(/^[a-z_]+(\.([a-z_]+|\*)?)?$/, "an action such as outcome.recorded, or a family such as second_review.*")
        .optional(),
    ),
    /** An alert's internal id (uuid) or its external id from the scoring service. */
    alert: optionalText(200),
    /** Inclusive. A bare date is the start of that UTC day. */
    from: optionalInstant,
    /** Inclusive. A bare date is the whole of that UTC day. */
    to: optionalInstant,
    preset: z.preprocess(blankToUndefined, z.enum(Object.keys(auditPresets) as [AuditPreset, ...AuditPreset[]]).optional()),
  })
  .superRefine((filter, context) => {
    if (filter.preset && filter.action) {
      context.addIssue({ code: "custom", path: ["action"], message: "leave the action empty when a question is chosen: it looks at clearing decisions only" });
    }
    if (filter.preset === "cleared_alert" && !filter.alert) {
      context.addIssue({ code: "custom", path: ["alert"], message: "name the alert (internal or external id) to ask who cleared it" });
    }
    if (filter.preset === "cleared_by" && !filter.actor) {
      context.addIssue({ code: "custom", path: ["actor"], message: "name the reviewer (e-mail or id) to ask what they cleared" });
    }
  });
export type AuditFilter = z.infer<typeof auditFilterSchema>;

export const AUDIT_PAGE_SIZE_DEFAULT = 50;
export const AUDIT_PAGE_SIZE_MAX = 500;

/** Keyset paging, newest first: `before` shows the events older than that id, `after` the newer ones. */
export const auditPageSchema = z
  .object({
    before: z.preprocess(blankToUndefined, z.string().regex(/^\d{1,19}$/, "an event id").optional()),
    after: z.preprocess(blankToUndefined, z.string().regex(/^\d{1,19}$/, "an event id").optional()),
    limit: z.preprocess(blankToUndefined, z.coerce.number().int().min(1).max(AUDIT_PAGE_SIZE_MAX).default(AUDIT_PAGE_SIZE_DEFAULT)),
  })
  .refine((page) => !(page.before && page.after), { path: ["after"], message: "use either before or after, not both" });
export type AuditPage = z.infer<typeof auditPageSchema>;
