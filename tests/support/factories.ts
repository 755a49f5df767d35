// Factories for integration tests: valid rows with sensible defaults, every field overridable.
// Each factory is self-contained (its own counter, its own defaults), so more can be added here
// without touching the others.
import { randomUUID } from "node:crypto";
import type { PrismaClient } from "@/lib/generated/prisma/client";
import type { UserActor } from "@/lib/auth/actor";
import type { Role } from "@/lib/auth/permissions";
import type { ScoreKind } from "@/lib/risk";

let sequence = 0;
const next = () => ++sequence;

// ---- users ------------------------------------------------------------------------------------

export interface UserOverrides {
  email?: string;
  displayName?: string;
  role?: Role;
  active?: boolean;
}

/** A person without a password (tests that sign in use tests/auth/factories.ts), as an actor. */
export async function createUser(prisma: PrismaClient, overrides: UserOverrides = {}): Promise<UserActor> {
  const n = next();
  const role = overrides.role ?? "analyst";
  const user = await prisma.user.create({
    data: {
      email: overrides.email ?? `${role}-${n}-${randomUUID().slice(0, 8)}@larkmoor.test`,
      displayName: overrides.displayName ?? `Test ${role} ${n}`,
      role,
      active: overrides.active ?? true,
    },
  });
  return { type: "user", id: user.id, email: user.email, displayName: user.displayName, role, sessionId: null };
}

// ---- model versions ---------------------------------------------------------------------------

export interface ModelVersionOverrides {
  modelName?: string;
  version?: string;
  scoreKind?: ScoreKind;
  negativeSamplingRate?: number;
  priorHitRate?: number | null;
  alertThreshold?: number;
  active?: boolean;
}

export interface TestModelVersion {
  id: string;
  modelName: string;
  version: string;
  scoreKind: ScoreKind;
  negativeSamplingRate: number;
  priorHitRate: number | null;
}

/** A probability-score model version trained without undersampling (β = 1) unless told otherwise. */
export async function createModelVersion(prisma: PrismaClient, overrides: ModelVersionOverrides = {}): Promise<TestModelVersion> {
  const n = next();
  const scoreKind = overrides.scoreKind ?? "probability";
  const created = await prisma.modelVersion.create({
    data: {
      modelName: overrides.modelName ?? "card-risk-test",
      version: overrides.version ?? `1.${n}.0`,
      scoreKind,
      negativeSamplingRate: overrides.negativeSamplingRate ?? 1,
      priorHitRate: overrides.priorHitRate !== undefined ? overrides.priorHitRate : scoreKind === "anomaly" ? 0.05 : null,
      alertThreshold: overrides.alertThreshold ?? 0.5,
      active: overrides.active ?? true,
    },
  });
  return {
    id: created.id,
    modelName: created.modelName,
    version: created.version,
    scoreKind: created.scoreKind as ScoreKind,
    negativeSamplingRate: created.negativeSamplingRate,
    priorHitRate: created.priorHitRate,
  };
}

// ---- alerts -----------------------------------------------------------------------------------

export interface AlertOverrides {
  externalId?: string;
  receivedAt?: Date;
  occurredAt?: Date;
  amountMinor?: number;
  currency?: string;
  channel?: string;
  score?: number;
  entityRef?: string;
  inclusionProbability?: number | null;
  // Risk fields: left empty unless given (recomputeWaitingAlerts or ingest derive them).
  probability?: number | null;
  calibrated?: boolean;
  probabilitySource?: "calibration_map" | "corrected_score" | "prior_hit_rate" | null;
  exposureMinor?: number | null;
  expectedLossMinor?: number | null;
  dueAt?: Date | null;
  priority?: number | null;
  // Lifecycle.
  state?: "waiting" | "in_review" | "second_review" | "closed";
  assignedToId?: string | null;
  claimedAt?: Date | null;
  leaseExpiresAt?: Date | null;
  closedAt?: Date | null;
  finalOutcome?: "confirmed_fraud" | "legitimate" | "inconclusive" | null;
}

export interface TestAlert {
  id: string;
  externalId: string;
}

const DEFAULT_RECEIVED_AT = new Date("2026-12-01T09:00:00Z");

/** A waiting card-present alert of 100.00 EUR scored 0.5, unless told otherwise. */
export async function createAlert(prisma: PrismaClient, modelVersionId: string, overrides: AlertOverrides = {}): Promise<TestAlert> {
  const n = next();
  const receivedAt = overrides.receivedAt ?? DEFAULT_RECEIVED_AT;
  const state = overrides.state ?? "waiting";
  const closed = state === "closed";
  const inReview = state === "in_review";
  const created = await prisma.alert.create({
    data: {
      externalId: overrides.externalId ?? `tx-${n}-${randomUUID().slice(0, 8)}`,
      contentHash: `test-${n}`,
      receivedAt,
      occurredAt: overrides.occurredAt ?? new Date(receivedAt.getTime() - 60_000),
      amountMinor: BigInt(overrides.amountMinor ?? 10_000),
      currency: overrides.currency ?? "EUR",
      channel: overrides.channel ?? "card_present",
      merchantCategoryCode: "5411",
      merchantCountry: "DE",
      entityRef: overrides.entityRef ?? `card-${n}`,
      modelVersionId,
      score: overrides.score ?? 0.5,
      belowTheLine: overrides.inclusionProbability != null,
      inclusionProbability: overrides.inclusionProbability ?? null,
      probability: overrides.probability ?? null,
      calibrated: overrides.calibrated ?? false,
      probabilitySource: overrides.probabilitySource ?? null,
      exposureMinor: overrides.exposureMinor == null ? null : BigInt(overrides.exposureMinor),
      expectedLossMinor: overrides.expectedLossMinor == null ? null : BigInt(overrides.expectedLossMinor),
      dueAt: overrides.dueAt ?? null,
      priority: overrides.priority ?? null,
      state,
      assignedToId: overrides.assignedToId ?? null,
      claimedAt: overrides.claimedAt ?? (inReview ? receivedAt : null),
      leaseExpiresAt: overrides.leaseExpiresAt ?? (inReview ? new Date(receivedAt.getTime() + 30 * 60_000) : null),
      closedAt: overrides.closedAt ?? (closed ? new Date(receivedAt.getTime() + 3_600_000) : null),
      finalOutcome: overrides.finalOutcome ?? (closed ? "legitimate" : null),
    },
    select: { id: true, externalId: true },
  });
  return created;
}

export interface WaitingAlertBatch {
  modelVersionId: string;
  count: number;
  /** Arrival of the first alert; each next one a second later. */
  receivedFrom: Date;
  /** Due time of every alert (default: a day after its arrival). */
  dueAt?: Date;
  prefix?: string;
}

/**
 * Many waiting alerts in one statement, with risk fields already set (priority spread so that no
 * two tie): for tests of claiming at volume, where the numbers themselves do not matter.
 */
export async function createWaitingAlerts(prisma: PrismaClient, batch: WaitingAlertBatch): Promise<string[]> {
  const prefix = batch.prefix ?? `bulk-${next()}-${randomUUID().slice(0, 8)}`;
  const rows = await prisma.$queryRaw<{ id: string }[]>`
    INSERT INTO alerts (external_id, content_hash, received_at, occurred_at, amount_minor, currency, channel,
                        merchant_category_code, merchant_country, entity_ref, model_version_id, score,
                        probability, calibrated, probability_source, exposure_minor, expected_loss_minor, due_at, priority)
    SELECT ${prefix} || '-' || g, 'bulk', ${batch.receivedFrom}::timestamptz + g * interval '1 second',
           ${batch.receivedFrom}::timestamptz, 10000 + g, 'EUR', 'card_present', '5411', 'DE', 'card-' || g,
           ${batch.modelVersionId}::uuid, 0.5, 0.5, false, 'corrected_score', 8500, 4250,
           coalesce(${batch.dueAt ?? null}::timestamptz, ${batch.receivedFrom}::timestamptz + g * interval '1 second' + interval '1 day'),
           4250 + (g * 7919) % 100000
      FROM generate_series(1, ${batch.count}::int) AS g
    RETURNING id`;
  return rows.map((row) => row.id);
}
