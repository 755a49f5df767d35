// Deactivates a person and ends every session they have, in the same transaction, so their next
// request is already refused (OWASP ASVS 5.0 §7.4.2, sessions ended when an account is disabled;
// from memory).
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { AUTH_TRANSACTION } from "@/lib/auth/transaction-options";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { assertNotLastActiveAdmin } from "@/lib/users/assert-not-last-active-admin";

export interface DeactivateUserOptions {
  actor: Actor;
  userId: string;
  now: Date;
  context?: AuditContext;
}

export async function deactivateUser(db: DbOrTx, options: DeactivateUserOptions): Promise<{ endedSessions: number; alreadyInactive: boolean }> {
  if (options.actor.type === "user" && options.actor.id === options.userId) {
    throw new AppError("conflict", "You cannot deactivate your own account; ask another admin.");
  }
  const run = async (tx: Prisma.TransactionClient) => {
    const user = await tx.user.findUnique({ where: { id: options.userId }, select: { id: true, role: true, active: true } });
    if (!user) throw new AppError("not_found", "No such user.");
    if (!user.active) return { endedSessions: 0, alreadyInactive: true };
    if (user.role === "admin") await assertNotLastActiveAdmin(tx, { userId: user.id, change: "deactivate" });
    await tx.user.update({ where: { id: user.id }, data: { active: false, updatedAt: options.now } });
    const ended = await tx.session.updateMany({ where: { userId: user.id, endedAt: null }, data: { endedAt: options.now, endedReason: "deactivated" } });
    await recordAuditEvent(tx, {
      actor: auditActorOf(options.actor),
      event: { action: "user.deactivated", payload: { endedSessions: ended.count } },
      subject: { type: "user", id: user.id },
      context: options.context,
    });
    return { endedSessions: ended.count, alreadyInactive: false };
  };
  return inTransaction(db, run, AUTH_TRANSACTION);
}
