// A new session for a person who just proved who they are. Always a new token, never a reused one
// (OWASP ASVS 5.0 §7.2.4, new session token on authentication; from memory).
import type { DbOrTx } from "@/lib/db/client";
import { hashToken, newOpaqueToken } from "@/lib/auth/opaque-token";
import { sessionPolicy, type SessionPolicy } from "@/lib/auth/session-cookie";

export interface CreateSessionOptions {
  userId: string;
  now: Date;
  ipAddress?: string | null;
  userAgent?: string | null;
  policy?: SessionPolicy;
}

export interface CreatedSession {
  sessionId: string;
  /** The cookie value. Shown to nobody else and stored nowhere: only its hash is kept. */
  token: string;
  expiresAt: Date;
}

/** Inserts the session row; the caller's transaction also records the sign-in event. */
export async function createSession(db: DbOrTx, options: CreateSessionOptions): Promise<CreatedSession> {
  const policy = options.policy ?? sessionPolicy();
  const token = newOpaqueToken();
  const expiresAt = new Date(options.now.getTime() + policy.absoluteLifetimeMs);
  const session = await db.session.create({
    data: {
      tokenHash: hashToken(token),
      userId: options.userId,
      createdAt: options.now,
      lastSeenAt: options.now,
      expiresAt,
      ipAddress: options.ipAddress ?? null,
      userAgent: options.userAgent?.slice(0, 500) ?? null,
    },
    select: { id: true },
  });
  return { sessionId: session.id, token, expiresAt };
}
