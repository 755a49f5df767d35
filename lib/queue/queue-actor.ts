// Who may work alerts: a signed-in person whose role has `alert.work`. API clients and the system
// never hold an alert; the shells check the same permission first, this is the domain's own guard.
import type { Actor, UserActor } from "@/lib/auth/actor";
import { can } from "@/lib/auth/permissions";
import { AppError } from "@/lib/errors";

export function assertMayWorkAlerts(actor: Actor): asserts actor is UserActor {
  if (actor.type !== "user") {
    throw new AppError("forbidden", "Only a signed-in analyst or supervisor can claim or release alerts.");
  }
  if (!can(actor.role, "alert.work")) {
    throw new AppError("forbidden", `Your role (${actor.role}) may not claim or release alerts.`);
  }
}

// Two-key advisory locks live in their own key space, apart from the one-key audit-chain lock.
export const QUEUE_LOCK_CLASS = 4_207_001;

/** At busy times a claim can wait for a pooled connection longer than Prisma's 5 s default allows. */
export const CLAIM_TRANSACTION = { maxWait: 10_000, timeout: 30_000 } as const;
