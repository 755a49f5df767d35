// Throttling of password guessing, per account and per network address (OWASP ASVS 5.0 §6.3.1,
// controls against credential stuffing and brute force; §6.1.1 documents them; from memory).
//
// Rule: when `limit` failures fall within any `window` minutes, sign-in is refused for `lock`
// minutes from the failure that reached the limit. Below the limit each answer is slowed by a
// small delay that grows with the recent failures. A successful sign-in clears the account's
// count, never the address's (one known account must not reset the count for guessing others).
// Refused attempts are not counted, so a lock ends on time however often someone keeps trying.
import { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";

export interface SignInThrottlePolicy {
  accountLimit: number;
  addressLimit: number;
  windowMinutes: number;
  lockMinutes: number;
  delayPerFailureMs: number;
  maxDelayMs: number;
}

export const signInThrottlePolicy: SignInThrottlePolicy = {
  accountLimit: 5,
  // Higher: many people may share one address behind an office gateway.
  addressLimit: 20,
  windowMinutes: 15,
  lockMinutes: 15,
  delayPerFailureMs: 200,
  maxDelayMs: 2_000,
};

export interface ThrottleState {
  /** Set while sign-in is refused; `account` wins when both apply. */
  lock: { scope: "account" | "address"; until: Date } | null;
  recentAccountFailures: number;
  recentAddressFailures: number;
  /** How long to wait before answering an attempt that is not refused. */
  delayMs: number;
}

export interface CheckSignInThrottleOptions {
  email: string;
  ipAddress: string;
  now: Date;
  policy?: SignInThrottlePolicy;
}

interface ScopeState {
  lockedUntil: Date | null;
  recent: number;
}

async function scopeState(db: DbOrTx, column: "email" | "ip_address", value: string, limit: number, now: Date, policy: SignInThrottlePolicy, resetOnSuccess: boolean): Promise<ScopeState> {
  const sinceSuccess = resetOnSuccess
    ? Prisma.sql`AND attempted_at > coalesce((SELECT max(attempted_at) FROM sign_in_attempts WHERE email = ${value} AND succeeded AND attempted_at <= ${now}), '-infinity'::timestamptz)`
    : Prisma.empty;
  // Only failures that can still matter: those within `window + lock` of now.
  const [row] = await db.$queryRaw<{ triggered_at: Date | null; recent: number }[]>`
    WITH failures AS (
      SELECT attempted_at FROM sign_in_attempts
       WHERE ${Prisma.raw(column)} = ${value} AND NOT succeeded
         AND attempted_at <= ${now}
         AND attempted_at > ${now}::timestamptz - make_interval(mins => ${policy.windowMinutes + policy.lockMinutes}::int)
         ${sinceSuccess}
    ), counted AS (
      SELECT attempted_at,
             count(*) OVER (ORDER BY attempted_at RANGE BETWEEN make_interval(mins => ${policy.windowMinutes}::int) PRECEDING AND CURRENT ROW) AS n
        FROM failures
    )
    SELECT (SELECT max(attempted_at) FROM counted WHERE n >= ${limit}::int) AS triggered_at,
           (SELECT count(*)::int FROM failures WHERE attempted_at > ${now}::timestamptz - make_interval(mins => ${policy.windowMinutes}::int)) AS recent`;
  const until = row.triggered_at ? new Date(row.triggered_at.getTime() + policy.lockMinutes * 60_000) : null;
  return { lockedUntil: until && until.getTime() > now.getTime() ? until : null, recent: row.recent };
}

export async function checkSignInThrottle(db: DbOrTx, options: CheckSignInThrottleOptions): Promise<ThrottleState> {
  const policy = options.policy ?? signInThrottlePolicy;
  const account = await scopeState(db, "email", options.email, policy.accountLimit, options.now, policy, true);
  const address = await scopeState(db, "ip_address", options.ipAddress, policy.addressLimit, options.now, policy, false);
  const lock = account.lockedUntil
    ? { scope: "account" as const, until: account.lockedUntil }
    : address.lockedUntil
      ? { scope: "address" as const, until: address.lockedUntil }
      : null;
  const failures = Math.max(account.recent, Math.floor(address.recent / 4));
  return {
    lock,
    recentAccountFailures: account.recent,
    recentAddressFailures: address.recent,
    delayMs: Math.min(policy.maxDelayMs, failures * policy.delayPerFailureMs),
  };
}
