// A person changes their own password after proving they know the current one; their other
// sessions end, this one stays (OWASP ASVS 5.0 §6.2.2 and §6.2.3, change with current and new
// password; §7.4.3, other sessions can be ended after a change of credentials; from memory).
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { AUTH_TRANSACTION } from "@/lib/auth/transaction-options";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { auditActorOf, type UserActor } from "@/lib/auth/actor";
import { changeOwnPasswordInputSchema } from "@/lib/auth/schemas";
import { hashPassword } from "@/lib/auth/hash-password";
import { verifyPassword } from "@/lib/auth/verify-password";

export interface ChangeOwnPasswordOptions {
  actor: UserActor;
  currentPassword: string;
  newPassword: string;
  confirmPassword: string;
  now: Date;
  context?: AuditContext;
}

export async function changeOwnPassword(db: DbOrTx, options: ChangeOwnPasswordOptions): Promise<{ endedOtherSessions: number }> {
  const parsed = changeOwnPasswordInputSchema.safeParse({
    currentPassword: options.currentPassword,
    newPassword: options.newPassword,
    confirmPassword: options.confirmPassword,
  });
  if (!parsed.success) {
    throw new AppError("invalid_input", "The new password is not accepted.", parsed.error.issues.map((issue) => ({ path: issue.path.join("."), message: issue.message })));
  }
  const user = await db.user.findUnique({ where: { id: options.actor.id }, select: { id: true, passwordHash: true, active: true } });
  if (!user || !user.active) throw new AppError("forbidden", "This account is not active.");
  const check = await verifyPassword(parsed.data.currentPassword, user.passwordHash);
  if (!check.matches) {
    throw new AppError("invalid_input", "The current password is not right.", [{ path: "currentPassword", message: "The current password is not right." }]);
  }
  const passwordHash = await hashPassword(parsed.data.newPassword);
  const run = async (tx: Prisma.TransactionClient) => {
    await tx.user.update({ where: { id: user.id }, data: { passwordHash, updatedAt: options.now } });
    const ended = await tx.session.updateMany({
      where: { userId: user.id, endedAt: null, ...(options.actor.sessionId ? { id: { not: options.actor.sessionId } } : {}) },
      data: { endedAt: options.now, endedReason: "password_changed" },
    });
    await recordAuditEvent(tx, {
      actor: auditActorOf(options.actor),
      event: { action: "user.password_changed", payload: {} },
      subject: { type: "user", id: user.id },
      context: options.context,
    });
    return { endedOtherSessions: ended.count };
  };
  return inTransaction(db, run, AUTH_TRANSACTION);
}
