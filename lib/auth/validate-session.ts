// Resolves a session cookie to the person behind it, enforcing the idle timeout and the absolute
// lifetime on the server (OWASP ASVS 5.0 §7.2.1 tokens verified at the back end, §7.3.1 idle
// timeout, §7.3.2 absolute lifetime; from memory). The clock is passed in, so tests need no waiting.
import type { DbOrTx } from "@/lib/db/client";
import type { UserActor } from "@/lib/auth/actor";
import { isRole } from "@/lib/auth/permissions";
import { hashToken } from "@/lib/auth/opaque-token";
import { endSession } from "@/lib/auth/end-session";
import { sessionPolicy, type SessionPolicy } from "@/lib/auth/session-cookie";
import type { AuditContext } from "@/lib/audit/schemas";

/** last_seen_at is written at most this often, so that every page view is not also a write. */
const LAST_SEEN_RESOLUTION_MS = 60_000;

export interface ValidateSessionOptions {
  token: string;
  now: Date;
  policy?: SessionPolicy;
  context?: AuditContext;
}

export interface ValidSession {
  user: UserActor;
  sessionId: string;
  expiresAt: Date;
}

export async function validateSession(db: DbOrTx, options: ValidateSessionOptions): Promise<ValidSession | null> {
  if (!options.token || options.token.length > 200) return null;
  const policy = options.policy ?? sessionPolicy();
  const session = await db.session.findUnique({
    where: { tokenHash: hashToken(options.token) },
    select: {
      id: true,
      lastSeenAt: true,
      expiresAt: true,
      endedAt: true,
      user: { select: { id: true, email: true, displayName: true, role: true, active: true } },
    },
  });
  if (!session || session.endedAt) return null;
  const now = options.now.getTime();
  if (now >= session.expiresAt.getTime()) {
    await endSession(db, { session: { id: session.id }, reason: "expired", now: options.now, context: options.context });
    return null;
  }
  if (now - session.lastSeenAt.getTime() >= policy.idleTimeoutMs) {
    await endSession(db, { session: { id: session.id }, reason: "idle_timeout", now: options.now, context: options.context });
    return null;
  }
  // Deactivation ends sessions in the same transaction; this is the second line of defence.
  if (!session.user.active || !isRole(session.user.role)) return null;
  if (now - session.lastSeenAt.getTime() >= LAST_SEEN_RESOLUTION_MS) {
    await db.session.updateMany({ where: { id: session.id, endedAt: null, lastSeenAt: { lt: options.now } }, data: { lastSeenAt: options.now } });
  }
  return {
    user: {
      type: "user",
      id: session.user.id,
      email: session.user.email,
      displayName: session.user.displayName,
      role: session.user.role,
      sessionId: session.id,
    },
    sessionId: session.id,
    expiresAt: session.expiresAt,
  };
}
