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
  z.object({ action: z.literal("model_version.saved"), payload: z.object({ modelName: z.string(), version: z.string(), changes: z.record(z.string(), z.unknown()) }) }),
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
  z.object({ action: z.literal("audit.exported"), payload: z.object({ filter: z.record(z.string(), z.unknown()), rowCount: z.number().int() }) }),
]);

export type AuditEventInput = z.infer<typeof auditEventSchema>;
export type AuditAction = AuditEventInput["action"];

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
