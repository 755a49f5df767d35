// The session cookie and the session timeouts (OWASP ASVS 5.0 §3.3, cookie setup: Secure, HttpOnly,
// SameSite; §7.3.1 inactivity timeout and §7.3.2 absolute lifetime; numbers from memory).
import { env } from "@/lib/env";

export const SESSION_COOKIE = "td_session";

export interface SessionPolicy {
  idleTimeoutMs: number;
  absoluteLifetimeMs: number;
}

/** From TRIAGE_SESSION_IDLE_MINUTES (default 30) and TRIAGE_SESSION_LIFETIME_HOURS (default 12). */
export function sessionPolicy(): SessionPolicy {
  const settings = env();
  return {
    idleTimeoutMs: settings.TRIAGE_SESSION_IDLE_MINUTES * 60_000,
    absoluteLifetimeMs: settings.TRIAGE_SESSION_LIFETIME_HOURS * 3_600_000,
  };
}

export interface SessionCookieOptions {
  httpOnly: true;
  sameSite: "lax";
  secure: boolean;
  path: "/";
  expires: Date;
}

/** HttpOnly (no script can read it), SameSite=Lax (not sent on cross-site POSTs), Secure in production.
 * The cookie expires with the session's absolute lifetime; the server decides everything else. */
export function sessionCookieOptions(expiresAt: Date): SessionCookieOptions {
  return { httpOnly: true, sameSite: "lax", secure: env().NODE_ENV === "production", path: "/", expires: expiresAt };
}
