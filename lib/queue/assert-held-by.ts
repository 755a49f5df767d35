// The rule "only the analyst who holds an alert may close it", for the outcome code. Pure: pass the
// alert as read (with FOR UPDATE) inside the transaction that will close it.
import type { Actor } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors";
import type { HoldableAlert } from "@/lib/queue/schemas";

/**
 * Throws a conflict unless `actor` holds the alert: state in_review and assigned to them. A lease
 * that has run out but not yet been swept still counts: nobody else can have the alert until
 * expireLeases returns it to the queue, and that runs before every claim. Second reviews follow
 * their own rule (a different person than the first reviewer) in the outcome code.
 */
export function assertHeldBy(alert: HoldableAlert, actor: Actor): void {
  if (alert.state === "closed") throw new AppError("conflict", "This alert is already closed.");
  if (alert.state === "waiting") throw new AppError("conflict", "Claim this alert before recording an outcome: it is waiting in the queue.");
  if (alert.state !== "in_review") throw new AppError("conflict", "This alert is waiting for a second review.");
  if (actor.type !== "user" || alert.assignedToId !== actor.id) {
    throw new AppError(
      "conflict",
      "Another analyst holds this alert, so you cannot close it. It returns to the queue when they release it or their lease runs out.",
    );
  }
}
