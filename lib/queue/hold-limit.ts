// "How many alerts may an analyst hold at once" (Settings → queue → maxHeldPerAnalyst), checked
// under a per-analyst advisory lock so that two tabs of the same person taking the next alert at
// the same moment cannot both pass the check and end up one over the limit.
import type { Prisma } from "@/lib/generated/prisma/client";
import { AppError } from "@/lib/errors";
import { QUEUE_LOCK_CLASS } from "@/lib/queue/queue-actor";

export async function assertBelowHoldLimit(tx: Prisma.TransactionClient, { userId, maxHeld }: { userId: string; maxHeld: number }): Promise<void> {
  await tx.$executeRaw`SELECT pg_advisory_xact_lock(${QUEUE_LOCK_CLASS}::int, hashtext(${userId}))`;
  // alerts_assigned_idx: only the open alerts assigned to someone.
  const [{ held }] = await tx.$queryRaw<{ held: number }[]>`
    SELECT count(*)::int AS held FROM alerts WHERE assigned_to_id = ${userId}::uuid AND state = 'in_review'`;
  if (held >= maxHeld) {
    throw new AppError(
      "conflict",
      `You already hold ${held} alert${held === 1 ? "" : "s"}, the most an analyst may hold at once (${maxHeld}). Close or release one before claiming another.`,
    );
  }
}
