// Creates a model version or updates an existing one (same model name and version), with a
// model_version.saved audit event naming what changed. Admins only (and the system, for the demo).
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { can } from "@/lib/auth/permissions";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
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
}

export interface SaveModelVersionResult {
  modelVersion: ModelVersionView;
  created: boolean;
  /** Field → { from, to } for what this save changed; empty when nothing did (and nothing is audited). */
  changes: Record<string, { from: unknown; to: unknown }>;
}

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
    }

    if (Object.keys(changes).length > 0) {
      await recordAuditEvent(tx, {
        actor: auditActorOf(options.actor),
        event: { action: "model_version.saved", payload: { modelName: input.modelName, version: input.version, changes } },
        subject: { type: "model_version", id: id! },
        context: options.context,
      });
    }
    const modelVersion = await findModelVersionByName(tx, { modelName: input.modelName, version: input.version });
    return { modelVersion: modelVersion!, created, changes };
  };
  return "$transaction" in db ? db.$transaction(run) : run(db);
}
