// Lets a deactivated person sign in again, with the password they had.
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { AUTH_TRANSACTION } from "@/lib/auth/transaction-options";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { auditActorOf, type Actor } from "@/lib/auth/actor";

export interface ReactivateUserOptions {
  actor: Actor;
  userId: string;
  now: Date;
  context?: AuditContext;
}

export async function reactivateUser(db: DbOrTx, options: ReactivateUserOptions): Promise<{ alreadyActive: boolean }> {
  const run = async (tx: Prisma.TransactionClient) => {
    const user = await tx.user.findUnique({ where: { id: options.userId }, select: { id: true, active: true } });
    if (!user) throw new AppError("not_found", "No such user.");
    if (user.active) return { alreadyActive: true };
    await tx.user.update({ where: { id: user.id }, data: { active: true, updatedAt: options.now } });
    await recordAuditEvent(tx, {
      actor: auditActorOf(options.actor),
      event: { action: "user.reactivated", payload: {} },
      subject: { type: "user", id: user.id },
      context: options.context,
    });
    return { alreadyActive: false };
  };
  return inTransaction(db, run, AUTH_TRANSACTION);
}
