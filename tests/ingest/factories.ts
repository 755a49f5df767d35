// Valid ingest rows and the records they need (users, model versions), with overrides per test.
import type { PrismaClient } from "@/lib/generated/prisma/client";
import { systemActor, type UserActor } from "@/lib/auth/actor";
import { saveModelVersion } from "@/lib/model-versions/save-model-version";

export const loader = systemActor("test-loader");

let sequence = 0;
export function nextExternalId(prefix = "txn"): string {
  sequence += 1;
  return `${prefix}-${String(sequence).padStart(6, "0")}`;
}

export function alertRow(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    externalId: nextExternalId(),
    occurredAt: "2026-11-30T10:00:00Z",
    amountMinor: 12_000,
    currency: "EUR",
    channel: "card_not_present",
    merchantCategoryCode: "5999",
    merchantCountry: "NL",
    entityRef: "tok_9f2c41",
    modelName: "txn-classifier",
    modelVersion: "3.1.0",
    score: 0.91,
    reasonCodes: [{ code: "velocity_1h", contribution: 0.31 }],
    belowTheLine: false,
    inclusionProbability: null,
    ...overrides,
  };
}

export function labelRow(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    externalId: nextExternalId(),
    label: "fraud",
    source: "chargeback",
    observedAt: "2026-12-01T09:00:00Z",
    reference: `CB-${sequence}`,
    ...overrides,
  };
}

export function outcomeRow(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    externalId: nextExternalId(),
    outcome: "confirmed_fraud",
    reason: "Cardholder denies the transaction",
    reviewerEmail: "ana.reviewer@example.test",
    claimedAt: "2026-11-30T11:00:00Z",
    closedAt: "2026-11-30T11:06:30Z",
    ...overrides,
  };
}

/** The two model versions the rows above name: a probability classifier and an anomaly detector. */
export async function registerModelVersions(prisma: PrismaClient): Promise<void> {
  await saveModelVersion(prisma, {
    actor: loader,
    input: { modelName: "txn-classifier", version: "3.1.0", scoreKind: "probability", negativeSamplingRate: 0.02, alertThreshold: 0.5 },
  });
  await saveModelVersion(prisma, {
    actor: loader,
    input: { modelName: "spend-ae", version: "1.0.0", scoreKind: "anomaly", priorHitRate: 0.12, alertThreshold: 4 },
  });
}

export async function createUser(prisma: PrismaClient, email: string, role: UserActor["role"] = "analyst"): Promise<UserActor> {
  const user = await prisma.user.create({ data: { email, displayName: email.split("@")[0], role } });
  return { type: "user", id: user.id, email: user.email, displayName: user.displayName, role, sessionId: null };
}
