// Ends one session on the server (OWASP ASVS 5.0 §7.4.1, sign-out invalidates the session at the
// back end; from memory). Safe to repeat: a session that has already ended stays as it was and no
// second event is written.
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { AUTH_TRANSACTION } from "@/lib/auth/transaction-options";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditActor, AuditContext } from "@/lib/audit/schemas";
import { hashToken } from "@/lib/auth/opaque-token";

export type SessionEndReason = "sign_out" | "idle_timeout" | "expired";

export interface EndSessionOptions {
  /** The cookie value, or the session's id. */
  session: { token: string } | { id: string };
  reason: SessionEndReason;
  now: Date;
  /** Who ended it; defaults to the session's own user for a sign-out and to the system for a timeout. */
  actor?: AuditActor;
  context?: AuditContext;
}

/** Returns the ended session's id and user, or null when there was no open session to end. */
export async function endSession(db: DbOrTx, options: EndSessionOptions): Promise<{ sessionId: string; userId: string } | null> {
  const where = "token" in options.session ? { tokenHash: hashToken(options.session.token) } : { id: options.session.id };
  const run = async (tx: Prisma.TransactionClient) => {
    const session = await tx.session.findUnique({ where, select: { id: true, userId: true, endedAt: true, user: { select: { email: true } } } });
    if (!session || session.endedAt) return null;
    const ended = await tx.session.updateMany({
      where: { id: session.id, endedAt: null },
      data: { endedAt: options.now, endedReason: options.reason },
    });
    if (ended.count === 0) return null;
    const actor: AuditActor =
      options.actor ??
      (options.reason === "sign_out" ? { type: "user", id: session.userId, label: session.user.email } : { type: "system", id: null, label: "session-timeout" });
    await recordAuditEvent(tx, {
      actor,
      event: { action: "session.signed_out", payload: { sessionId: session.id, reason: options.reason } },
      subject: { type: "user", id: session.userId },
      context: options.context,
    });
    return { sessionId: session.id, userId: session.userId };
  };
  return inTransaction(db, run, AUTH_TRANSACTION);
}
