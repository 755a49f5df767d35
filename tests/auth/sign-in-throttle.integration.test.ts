// Lock-out per account and per address (OWASP ASVS 5.0 §6.3.1, from memory). The clock is passed
// in, so "15 minutes later" needs no waiting.
import { describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { INVALID_CREDENTIALS_MESSAGE, signIn, type SignInOptions } from "@/lib/auth/sign-in";
import { signInThrottlePolicy } from "@/lib/auth/check-sign-in-throttle";
import { TEST_PASSWORD, makeUser, minutesAfter } from "@/tests/auth/factories";

const database = await useTestDatabase();
const { prisma } = database;

function attempt(options: Omit<SignInOptions, "wait"> & { waits?: number[] }) {
  const waits = options.waits ?? [];
  return signIn(prisma, { ...options, wait: async (ms) => void waits.push(ms) });
}

describe("sign-in throttling", () => {
  it("locks an account for 15 minutes after 5 failures, refuses even the right password meanwhile, and lets it in afterwards", { timeout: 180_000 }, async () => {
    const user = await makeUser(prisma);
    const start = new Date("2030-04-01T09:00:00Z");
    const waits: number[] = [];
    const results = [];
    for (let index = 0; index < 5; index += 1) {
      // Each from a different address: the account limit alone must trigger.
      results.push(await attempt({ email: user.email, password: "wrong password", ipAddress: `198.51.100.${index + 1}`, now: minutesAfter(start, index), waits }));
    }
    expect(results.slice(0, 4).map((result) => result.ok === false && result.reason)).toEqual(["invalid_credentials", "invalid_credentials", "invalid_credentials", "invalid_credentials"]);
    const fifth = results[4];
    expect(fifth.ok === false && fifth.reason).toBe("locked");
    expect(fifth.ok === false && fifth.message).toMatch(/Try again in 15 minutes/);
    // Slowed before the lock: each failure adds a little delay.
    expect(waits).toEqual([200, 400, 600, 800]);

    const during = await attempt({ email: user.email, password: TEST_PASSWORD, ipAddress: "198.51.100.9", now: minutesAfter(start, 10) });
    expect(during).toMatchObject({ ok: false, reason: "locked", scope: "account" });
    expect(during.ok === false && during.message).toBe("Too many failed sign-ins for this account. Try again in 9 minutes.");

    const after = await attempt({ email: user.email, password: TEST_PASSWORD, ipAddress: "198.51.100.9", now: minutesAfter(start, 19) });
    expect(after.ok).toBe(true);

    const events = await prisma.auditEvent.findMany({ where: { action: { in: ["session.sign_in_failed", "session.locked_out", "session.signed_in"] }, subjectId: user.id }, orderBy: { id: "asc" } });
    expect(events.map((event) => event.action)).toEqual([
      "session.sign_in_failed",
      "session.sign_in_failed",
      "session.sign_in_failed",
      "session.sign_in_failed",
      "session.sign_in_failed",
      "session.locked_out",
      "session.signed_in",
    ]);
    expect(events[5].payload).toEqual({ email: user.email, until: "2030-04-01T09:19:00.000Z", scope: "account" });
    // The refusal during the lock is recorded too, without a subject (no password was checked).
    const refused = await prisma.auditEvent.findMany({ where: { action: "session.sign_in_failed", payload: { path: ["reason"], equals: "locked_account" } } });
    expect(refused).toHaveLength(1);
  });

  it("a successful sign-in clears the account's count of failures", async () => {
    const user = await makeUser(prisma);
    const start = new Date("2030-04-02T09:00:00Z");
    for (let index = 0; index < 4; index += 1) {
      await attempt({ email: user.email, password: "wrong password", ipAddress: "198.51.100.20", now: minutesAfter(start, index) });
    }
    expect((await attempt({ email: user.email, password: TEST_PASSWORD, ipAddress: "198.51.100.20", now: minutesAfter(start, 4) })).ok).toBe(true);
    const next = await attempt({ email: user.email, password: "wrong password", ipAddress: "198.51.100.20", now: minutesAfter(start, 5) });
    expect(next).toMatchObject({ ok: false, reason: "invalid_credentials" });
  });

  it("locks an address that fails across many accounts, while other addresses still get in", async () => {
    const policy = { ...signInThrottlePolicy, addressLimit: 3 };
    const user = await makeUser(prisma);
    const start = new Date("2030-04-03T09:00:00Z");
    const guesses = [];
    for (let index = 0; index < 3; index += 1) {
      guesses.push(await attempt({ email: `nobody${index}@test.example`, password: "guess", ipAddress: "203.0.113.7", now: minutesAfter(start, index), throttlePolicy: policy }));
    }
    expect(guesses[2]).toMatchObject({ ok: false, reason: "locked", scope: "address" });
    const fromSameAddress = await attempt({ email: user.email, password: TEST_PASSWORD, ipAddress: "203.0.113.7", now: minutesAfter(start, 3), throttlePolicy: policy });
    expect(fromSameAddress).toMatchObject({ ok: false, reason: "locked", scope: "address" });
    expect(fromSameAddress.ok === false && fromSameAddress.message).toMatch(/from your network address/);
    const fromElsewhere = await attempt({ email: user.email, password: TEST_PASSWORD, ipAddress: "203.0.113.8", now: minutesAfter(start, 3), throttlePolicy: policy });
    expect(fromElsewhere.ok).toBe(true);
    const lock = await prisma.auditEvent.findFirstOrThrow({ where: { action: "session.locked_out", payload: { path: ["scope"], equals: "address" } } });
    expect(lock.ipAddress).toBe("203.0.113.7");
  });

  it("gives the same answer for an unknown email, a wrong password and a deactivated account", async () => {
    const active = await makeUser(prisma);
    const inactive = await makeUser(prisma, { active: false });
    const now = new Date("2030-04-04T09:00:00Z");
    const unknown = await attempt({ email: "no.one@test.example", password: TEST_PASSWORD, ipAddress: "198.51.100.30", now });
    const wrong = await attempt({ email: active.email, password: "wrong password", ipAddress: "198.51.100.31", now });
    const deactivated = await attempt({ email: inactive.email, password: TEST_PASSWORD, ipAddress: "198.51.100.32", now });
    for (const result of [unknown, wrong, deactivated]) expect(result).toEqual({ ok: false, reason: "invalid_credentials", message: INVALID_CREDENTIALS_MESSAGE });
    const reasons = await prisma.auditEvent.findMany({ where: { action: "session.sign_in_failed", ipAddress: { in: ["198.51.100.30", "198.51.100.31", "198.51.100.32"] } }, orderBy: { id: "asc" } });
    expect(reasons.map((event) => (event.payload as { reason: string }).reason)).toEqual(["unknown_email", "wrong_password", "inactive"]);
  });

  it("treats the email without regard to case or surrounding spaces", async () => {
    const user = await makeUser(prisma);
    const result = await attempt({ email: `  ${user.email.toUpperCase()} `, password: TEST_PASSWORD, ipAddress: "198.51.100.40", now: new Date("2030-04-05T09:00:00Z") });
    expect(result.ok).toBe(true);
  });
});
