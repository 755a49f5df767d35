// Changes a person's role. Takes effect on their next request: sessions carry no role of their own.
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { AUTH_TRANSACTION } from "@/lib/auth/transaction-options";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { roleSchema } from "@/lib/users/schemas";
import { assertNotLastActiveAdmin } from "@/lib/users/assert-not-last-active-admin";

export interface ChangeRoleOptions {
  actor: Actor;
  userId: string;
  role: string;
  now: Date;
  context?: AuditContext;
}

/** Returns the role before and after; unchanged when the role was already the one asked for. */
export async function changeRole(db: DbOrTx, options: ChangeRoleOptions): Promise<{ from: string; to: string; changed: boolean }> {
  const role = roleSchema.safeParse(options.role);
  if (!role.success) throw new AppError("invalid_input", role.error.issues[0].message, [{ path: "role", message: role.error.issues[0].message }]);
  const run = async (tx: Prisma.TransactionClient) => {
    const user = await tx.user.findUnique({ where: { id: options.userId }, select: { id: true, role: true } });
    if (!user) throw new AppError("not_found", "No such user.");
    if (user.role === role.data) return { from: user.role, to: role.data, changed: false };
    if (user.role === "admin") await assertNotLastActiveAdmin(tx, { userId: user.id, change: "demote" });
    await tx.user.update({ where: { id: user.id }, data: { role: role.data, updatedAt: options.now } });
    await recordAuditEvent(tx, {
      actor: auditActorOf(options.actor),
      event: { action: "user.role_changed", payload: { from: user.role, to: role.data } },
      subject: { type: "user", id: user.id },
      context: options.context,
    });
    return { from: user.role, to: role.data, changed: true };
  };
  return inTransaction(db, run, AUTH_TRANSACTION);
}
