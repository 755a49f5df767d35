// Creates a person with a role and an initial password, audited in the same transaction.
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { AUTH_TRANSACTION } from "@/lib/auth/transaction-options";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { hashPassword } from "@/lib/auth/hash-password";
import { createUserInputSchema, type UserSummary } from "@/lib/users/schemas";

export interface CreateUserOptions {
  actor: Actor;
  email: string;
  displayName: string;
  role: string;
  password: string;
  now?: Date;
  context?: AuditContext;
}

export async function createUser(db: DbOrTx, options: CreateUserOptions): Promise<UserSummary> {
  const parsed = createUserInputSchema.safeParse({ email: options.email, displayName: options.displayName, role: options.role, password: options.password });
  if (!parsed.success) {
    throw new AppError("invalid_input", "The new user is not valid.", parsed.error.issues.map((issue) => ({ path: issue.path.join("."), message: issue.message })));
  }
  const input = parsed.data;
  const passwordHash = await hashPassword(input.password);
  const run = async (tx: Prisma.TransactionClient) => {
    if (await tx.user.findUnique({ where: { email: input.email }, select: { id: true } })) {
      throw new AppError("conflict", `A user with the email ${input.email} already exists.`, [{ path: "email", message: "This email is taken." }]);
    }
    const user = await tx.user.create({
      data: {
        email: input.email,
        displayName: input.displayName,
        role: input.role,
        passwordHash,
        ...(options.now ? { createdAt: options.now, updatedAt: options.now } : {}),
      },
      select: { id: true, email: true, displayName: true, role: true, active: true, createdAt: true },
    });
    await recordAuditEvent(tx, {
      actor: auditActorOf(options.actor),
      event: { action: "user.created", payload: { email: user.email, role: user.role } },
      subject: { type: "user", id: user.id },
      context: options.context,
    });
    return { ...user, openSessions: 0, lastSignInAt: null };
  };
  return inTransaction(db, run, AUTH_TRANSACTION);
}
