// "How many alerts may an analyst hold at once" (Settings → queue → maxHeldPerAnalyst), checked
// under a per-analyst advisory lock so that two tabs of the same person taking the next alert at
// the same moment cannot both pass the check and end up one over the limit. The SQL is shared by
// the Prisma path (claim one alert) and the pg path (take next).
import type { Prisma } from "@/lib/generated/prisma/client";
import { AppError } from "@/lib/errors";
import { QUEUE_LOCK_CLASS } from "@/lib/queue/queue-actor";

/** $1 = user id. Held until the transaction ends; the count must be a later statement, whose snapshot then sees the other tab's claim. */
export const HOLD_LOCK_SQL = `SELECT pg_advisory_xact_lock(${QUEUE_LOCK_CLASS}::int, hashtext($1::text))`;
/** $1 = user id. alerts_assigned_idx: only the open alerts assigned to someone. */
export const HELD_COUNT_SQL = `SELECT count(*)::int AS held FROM alerts WHERE assigned_to_id = $1::uuid AND state = 'in_review'`;

/** The refusal when `held` alerts already reach the limit, else null. */
export function holdLimitReached(held: number, maxHeld: number): AppError | null {
  if (held < maxHeld) return null;
  return new AppError(
    "conflict",
    `You already hold ${held} alert${held === 1 ? "" : "s"}, the most an analyst may hold at once (${maxHeld}). Close or release one before claiming another.`,
  );
}

export async function assertBelowHoldLimit(tx: Prisma.TransactionClient, { userId, maxHeld }: { userId: string; maxHeld: number }): Promise<void> {
  await tx.$executeRawUnsafe(HOLD_LOCK_SQL, userId);
  const [{ held }] = await tx.$queryRawUnsafe<{ held: number }[]>(HELD_COUNT_SQL, userId);
  const refusal = holdLimitReached(held, maxHeld);
  if (refusal) throw refusal;
}
