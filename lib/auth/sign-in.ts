// Email-and-password sign-in. Every outcome is recorded as an audit event: success, failure (with
// the reason, never the password), refusal while locked, and the failure that starts a lock
// (OWASP ASVS 5.0 §16.3.1, authentication events logged; from memory).
//
// Each attempt is written as a failure *before* the password is checked and turned into a success
// afterwards, under a per-account and per-address advisory lock: parallel guesses therefore count
// against the limit at once instead of all slipping past a check that none of them has updated yet.
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { AUTH_TRANSACTION } from "@/lib/auth/transaction-options";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditActor, AuditContext } from "@/lib/audit/schemas";
import type { UserActor } from "@/lib/auth/actor";
import { isRole } from "@/lib/auth/permissions";
import { emailSchema } from "@/lib/auth/schemas";
import { verifyPassword } from "@/lib/auth/verify-password";
import { hashPassword } from "@/lib/auth/hash-password";
import { createSession } from "@/lib/auth/create-session";
import { endSession } from "@/lib/auth/end-session";
import type { SessionPolicy } from "@/lib/auth/session-cookie";
import { checkSignInThrottle, signInThrottlePolicy, type SignInThrottlePolicy } from "@/lib/auth/check-sign-in-throttle";

export const INVALID_CREDENTIALS_MESSAGE = "The email or password is not right.";

export interface SignInOptions {
  email: string;
  password: string;
  ipAddress: string;
  userAgent?: string | null;
  now: Date;
  /** The session cookie the browser still sent, if any: it is ended, never reused. */
  previousSessionToken?: string | null;
  context?: AuditContext;
  /** How to wait before answering a throttled attempt; tests pass a function that records instead. */
  wait?: (ms: number) => Promise<void>;
  throttlePolicy?: SignInThrottlePolicy;
  sessionPolicy?: SessionPolicy;
}

export type SignInResult =
  | { ok: true; user: UserActor; sessionId: string; token: string; expiresAt: Date }
  | { ok: false; reason: "invalid_credentials"; message: string }
  | { ok: false; reason: "locked"; scope: "account" | "address"; until: Date; message: string };

const anonymous: AuditActor = { type: "system", id: null, label: "sign-in" };

const sleep = (ms: number) => new Promise<void>((resolve) => setTimeout(resolve, ms));

function lockedMessage(scope: "account" | "address", until: Date, now: Date): string {
  const minutes = Math.max(1, Math.ceil((until.getTime() - now.getTime()) / 60_000));
  const where = scope === "account" ? "for this account" : "from your network address";
  return `Too many failed sign-ins ${where}. Try again in ${minutes} minute${minutes === 1 ? "" : "s"}.`;
}

async function lockAttemptKeys(tx: Prisma.TransactionClient, email: string, ipAddress: string): Promise<void> {
  // Always the account first, then the address, so two attempts never wait on each other in a circle.
  await tx.$executeRaw`SELECT pg_advisory_xact_lock(hashtextextended(${`sign-in:email:${email}`}, 0))`;
  await tx.$executeRaw`SELECT pg_advisory_xact_lock(hashtextextended(${`sign-in:address:${ipAddress}`}, 0))`;
}

export async function signIn(db: DbOrTx, options: SignInOptions): Promise<SignInResult> {
  const parsedEmail = emailSchema.safeParse(options.email);
  if (!parsedEmail.success) throw new AppError("invalid_input", "Enter an email address.", [{ path: "email", message: parsedEmail.error.issues[0].message }]);
  const email = parsedEmail.data;
  const ipAddress = options.ipAddress || "unknown";
  const now = options.now;
  const policy = options.throttlePolicy ?? signInThrottlePolicy;
  const context: AuditContext = { ipAddress, ...options.context };

  // 1. Refuse while locked; otherwise count this attempt as a failure until proven otherwise.
  type Admission = { refused: { scope: "account" | "address"; until: Date } } | { refused: null; attemptId: bigint; delayMs: number };
  const admitted = await inTransaction(
    db,
    async (tx): Promise<Admission> => {
      await lockAttemptKeys(tx, email, ipAddress);
      const throttle = await checkSignInThrottle(tx, { email, ipAddress, now, policy });
      if (throttle.lock) {
        await recordAuditEvent(tx, {
          actor: anonymous,
          event: { action: "session.sign_in_failed", payload: { email, reason: `locked_${throttle.lock.scope}` } },
          context,
        });
        return { refused: throttle.lock };
      }
      const attempt = await tx.signInAttempt.create({ data: { email, ipAddress, succeeded: false, attemptedAt: now }, select: { id: true } });
      return { refused: null, attemptId: attempt.id, delayMs: throttle.delayMs };
    },
    AUTH_TRANSACTION,
  );
  if (admitted.refused) {
    return { ok: false, reason: "locked", scope: admitted.refused.scope, until: admitted.refused.until, message: lockedMessage(admitted.refused.scope, admitted.refused.until, now) };
  }
  const { attemptId, delayMs } = admitted;
  if (delayMs > 0) await (options.wait ?? sleep)(delayMs);

  // 2. Check the password; an unknown account costs the same time as a wrong password.
  const user = await db.user.findUnique({ where: { email }, select: { id: true, email: true, displayName: true, role: true, passwordHash: true, active: true } });
  const check = await verifyPassword(options.password, user?.passwordHash ?? null);
  const failure = !user ? "unknown_email" : !user.passwordHash ? "no_password" : !check.matches ? "wrong_password" : !user.active ? "inactive" : !isRole(user.role) ? "unknown_role" : null;

  if (!failure && user && isRole(user.role)) {
    const role = user.role;
    const newHash = check.needsRehash ? await hashPassword(options.password) : null;
    return inTransaction(db, async (tx) => {
      await tx.signInAttempt.update({ where: { id: attemptId }, data: { succeeded: true } });
      if (options.previousSessionToken) {
        await endSession(tx, { session: { token: options.previousSessionToken }, reason: "sign_out", now, context });
      }
      if (newHash) await tx.user.update({ where: { id: user.id }, data: { passwordHash: newHash, updatedAt: now } });
      const session = await createSession(tx, { userId: user.id, now, ipAddress, userAgent: options.userAgent, policy: options.sessionPolicy });
      await recordAuditEvent(tx, {
        actor: { type: "user", id: user.id, label: user.email },
        event: { action: "session.signed_in", payload: { sessionId: session.sessionId } },
        subject: { type: "user", id: user.id },
        context,
      });
      const actor: UserActor = { type: "user", id: user.id, email: user.email, displayName: user.displayName, role, sessionId: session.sessionId };
      return { ok: true as const, user: actor, ...session };
    }, AUTH_TRANSACTION);
  }

  // 3. Record the failure; when it reaches the limit, record the lock it starts.
  return inTransaction(db, async (tx) => {
    await lockAttemptKeys(tx, email, ipAddress);
    const subject = user ? { type: "user", id: user.id } : null;
    await recordAuditEvent(tx, { actor: anonymous, event: { action: "session.sign_in_failed", payload: { email, reason: failure ?? "unknown" } }, subject, context });
    const after = await checkSignInThrottle(tx, { email, ipAddress, now, policy });
    const startedNow = after.lock && after.lock.until.getTime() === now.getTime() + policy.lockMinutes * 60_000;
    if (after.lock && startedNow) {
      await recordAuditEvent(tx, {
        actor: anonymous,
        event: { action: "session.locked_out", payload: { email, until: after.lock.until.toISOString(), scope: after.lock.scope } },
        subject,
        context,
      });
      return { ok: false as const, reason: "locked" as const, scope: after.lock.scope, until: after.lock.until, message: `${INVALID_CREDENTIALS_MESSAGE} ${lockedMessage(after.lock.scope, after.lock.until, now)}` };
    }
    return { ok: false as const, reason: "invalid_credentials" as const, message: INVALID_CREDENTIALS_MESSAGE };
  }, AUTH_TRANSACTION);
}
