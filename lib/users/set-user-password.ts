// Sets someone's password without the current one: for an admin at the command line when a person
// has forgotten theirs. Every session of that person ends, since whoever held them may not be them.
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { AUTH_TRANSACTION } from "@/lib/auth/transaction-options";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { newPasswordSchema } from "@/lib/auth/schemas";
import { hashPassword } from "@/lib/auth/hash-password";

export interface SetUserPasswordOptions {
  actor: Actor;
  userId: string;
  password: string;
  now: Date;
  context?: AuditContext;
}

export async function setUserPassword(db: DbOrTx, options: SetUserPasswordOptions): Promise<{ endedSessions: number }> {
  const password = newPasswordSchema.safeParse(options.password);
  if (!password.success) throw new AppError("invalid_input", password.error.issues[0].message, [{ path: "password", message: password.error.issues[0].message }]);
  const passwordHash = await hashPassword(password.data);
  const run = async (tx: Prisma.TransactionClient) => {
    const user = await tx.user.findUnique({ where: { id: options.userId }, select: { id: true } });
    if (!user) throw new AppError("not_found", "No such user.");
    await tx.user.update({ where: { id: user.id }, data: { passwordHash, updatedAt: options.now } });
    const ended = await tx.session.updateMany({ where: { userId: user.id, endedAt: null }, data: { endedAt: options.now, endedReason: "password_changed" } });
    await recordAuditEvent(tx, {
      actor: auditActorOf(options.actor),
      event: { action: "user.password_changed", payload: {} },
      subject: { type: "user", id: user.id },
      context: options.context,
    });
    return { endedSessions: ended.count };
  };
  return inTransaction(db, run, AUTH_TRANSACTION);
}
