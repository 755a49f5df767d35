// Serialises calibration work on one model version (two refits, or a refit and the "is a refit
// due?" check after an outcome), with a transaction-scoped advisory lock in the two-key space.
import type { Prisma } from "@/lib/generated/prisma/client";

const CALIBRATION_LOCK_CLASS = 4_207_002;

export async function lockModelVersionCalibration(tx: Prisma.TransactionClient, modelVersionId: string): Promise<void> {
  await tx.$executeRaw`SELECT pg_advisory_xact_lock(${CALIBRATION_LOCK_CLASS}::int, hashtext(${modelVersionId}))`;
}
