// Creates a model version or updates an existing one (same model name and version), with a
// model_version.saved audit event naming what changed. Admins only (and the system, for the demo).
// A change of the negative sampling rate (β) or the prior hit rate re-derives the version's waiting
// alerts in the same transaction: without a calibration map their probability, and so their expected
// loss, due time and place in the queue, come from those two numbers (DESIGN.md, "Probability of fraud for an alert").
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { can } from "@/lib/auth/permissions";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import { inTransaction } from "@/lib/db/in-transaction";
import { REFIT_TRANSACTION } from "@/lib/calibration/refit-calibration";
import { recomputeWaitingAlerts } from "@/lib/queue/recompute-waiting-alerts";
import { getSettings } from "@/lib/settings/get-settings";
import type { AuditContext } from "@/lib/audit/schemas";
import { formatFieldPath } from "@/lib/ingest/card-number-guard";
import { readableIssueMessage } from "@/lib/ingest/validate-rows";
import { findModelVersionByName } from "@/lib/model-versions/find-model-version-by-name";
import { MODEL_VERSION_EDITABLE_FIELDS, modelVersionInputSchema, type ModelVersionView } from "@/lib/model-versions/schemas";

export interface SaveModelVersionOptions {
  actor: Actor;
  /** Unvalidated: { modelName, version, scoreKind, negativeSamplingRate?, priorHitRate?, alertThreshold, active? }. */
  input: unknown;
  context?: AuditContext;
  /** When the change applies (due times of re-derived alerts); the clock's now when absent. */
  now?: Date;
}

export interface SaveModelVersionResult {
  modelVersion: ModelVersionView;
  created: boolean;
  /** Field → { from, to } for what this save changed; empty when nothing did (and nothing is audited). */
  changes: Record<string, { from: unknown; to: unknown }>;
  /** Waiting alerts of this version re-derived because β or the prior hit rate changed (0 otherwise). */
  recomputedAlerts: number;
}

/** The fields that feed a waiting alert's probability when its version has no calibration map. */
const PROBABILITY_INPUTS = ["negativeSamplingRate", "priorHitRate"] as const;

function assertMayManage(actor: Actor): void {
  if (actor.type === "system") return;
  if (actor.type === "user" && can(actor.role, "model_versions.manage")) return;
  throw new AppError("forbidden", "Only an admin may create or change model versions.");
}

export async function saveModelVersion(db: DbOrTx, options: SaveModelVersionOptions): Promise<SaveModelVersionResult> {
  assertMayManage(options.actor);
  const parsed = modelVersionInputSchema.safeParse(options.input, { error: readableIssueMessage });
  if (!parsed.success) {
    throw new AppError(
      "invalid_input",
      "The model version is not valid",
      parsed.error.issues.map((issue) => ({ path: formatFieldPath(issue.path), message: issue.message })),
    );
  }
  const input = parsed.data;

  const run = async (tx: Prisma.TransactionClient): Promise<SaveModelVersionResult> => {
    // Serialises two saves of the same version, so each sees the other's result as "before".
    const [existing] = await tx.$queryRaw<{ id: string }[]>`
      SELECT id FROM model_versions WHERE model_name = ${input.modelName} AND version = ${input.version} FOR UPDATE`;
    const changes: SaveModelVersionResult["changes"] = {};
    let created = false;
    let recomputedAlerts = 0;
    let id = existing?.id;

    if (!existing) {
      id = (await tx.modelVersion.create({ data: input, select: { id: true } })).id;
      for (const field of MODEL_VERSION_EDITABLE_FIELDS) changes[field] = { from: null, to: input[field] };
      created = true;
    } else {
      const before = await tx.modelVersion.findUniqueOrThrow({ where: { id: existing.id } });
      for (const field of MODEL_VERSION_EDITABLE_FIELDS) {
        if (before[field] !== input[field]) changes[field] = { from: before[field], to: input[field] };
      }
      if (changes.scoreKind) {
        const alert = await tx.alert.findFirst({ where: { modelVersionId: existing.id }, select: { id: true } });
        if (alert) {
          throw new AppError(
            "conflict",
            `${input.modelName} ${input.version} already has alerts scored as ${before.scoreKind}; a different score kind needs a new version.`,
          );
        }
      }
      if (Object.keys(changes).length > 0) {
        await tx.modelVersion.update({ where: { id: existing.id }, data: input });
      }
      if (PROBABILITY_INPUTS.some((field) => field in changes)) {
        // Before the audit append: the recompute may wait for rows that claims hold (recompute-waiting-alerts.ts).
        recomputedAlerts = await recomputeWaitingAlerts(tx, { now: options.now ?? new Date(), settings: await getSettings(tx), modelVersionId: existing.id });
      }
    }

    if (Object.keys(changes).length > 0) {
      await recordAuditEvent(tx, {
        actor: auditActorOf(options.actor),
        event: { action: "model_version.saved", payload: { modelName: input.modelName, version: input.version, changes, recomputedAlerts } },
        subject: { type: "model_version", id: id! },
        context: options.context,
      });
    }
    const modelVersion = await findModelVersionByName(tx, { modelName: input.modelName, version: input.version });
    return { modelVersion: modelVersion!, created, changes, recomputedAlerts };
  };
  return inTransaction(db, run, REFIT_TRANSACTION);
}
