import { createHash } from "node:crypto";
import { describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { signIn } from "@/lib/auth/sign-in";
import { validateSession } from "@/lib/auth/validate-session";
import { endSession } from "@/lib/auth/end-session";
import { TEST_PASSWORD, makeUser, minutesAfter } from "@/tests/auth/factories";

const database = await useTestDatabase();
const { prisma } = database;
const policy = { idleTimeoutMs: 30 * 60_000, absoluteLifetimeMs: 12 * 3_600_000 };
const noWait = async () => undefined;

async function signedIn(now: Date) {
  const user = await makeUser(prisma);
  const result = await signIn(prisma, { email: user.email, password: TEST_PASSWORD, ipAddress: "192.0.2.10", now, sessionPolicy: policy, wait: noWait });
  if (!result.ok) throw new Error(`sign-in failed: ${result.message}`);
  return { ...result, user };
}

describe("sessions", () => {
  it("keep only the SHA-256 of the cookie token, which carries 256 random bits", async () => {
    const start = new Date("2030-03-01T08:00:00Z");
    const { token, sessionId } = await signedIn(start);
    expect(token).toMatch(/^[A-Za-z0-9_-]{43}$/);
    const row = await prisma.session.findUniqueOrThrow({ where: { id: sessionId } });
    expect(row.tokenHash).toBe(createHash("sha256").update(token).digest("hex"));
    expect(row.tokenHash).not.toContain(token);
    expect(row.expiresAt.toISOString()).toBe("2030-03-01T20:00:00.000Z");
  });

  it("end after 30 minutes without a request, and each request restarts the idle clock", async () => {
    // OWASP ASVS 5.0 §7.3.1 inactivity timeout (from memory).
    const start = new Date("2030-03-01T08:00:00Z");
    const { token, sessionId, user } = await signedIn(start);
    expect(await validateSession(prisma, { token, now: minutesAfter(start, 29), policy })).not.toBeNull();
    expect(await validateSession(prisma, { token, now: minutesAfter(start, 58), policy })).not.toBeNull();
    const afterIdle = await validateSession(prisma, { token, now: minutesAfter(start, 88), policy });
    expect(afterIdle).toBeNull();
    const row = await prisma.session.findUniqueOrThrow({ where: { id: sessionId } });
    expect(row.endedReason).toBe("idle_timeout");
    // Once ended, it stays ended even if the clock were to say otherwise.
    expect(await validateSession(prisma, { token, now: minutesAfter(start, 60), policy })).toBeNull();
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { subjectId: user.id, action: "session.signed_out" } });
    expect(event.payload).toEqual({ sessionId, reason: "idle_timeout" });
  });

  it("end at their absolute lifetime of 12 hours however active the person is", async () => {
    // OWASP ASVS 5.0 §7.3.2 absolute session lifetime (from memory).
    const start = new Date("2030-03-01T08:00:00Z");
    const { token, sessionId } = await signedIn(start);
    for (let minute = 20; minute < 12 * 60; minute += 20) {
      expect(await validateSession(prisma, { token, now: minutesAfter(start, minute), policy }), `minute ${minute}`).not.toBeNull();
    }
    expect(await validateSession(prisma, { token, now: minutesAfter(start, 12 * 60), policy })).toBeNull();
    expect((await prisma.session.findUniqueOrThrow({ where: { id: sessionId } })).endedReason).toBe("expired");
  });

  it("sign-out ends the session on the server, so the old cookie no longer works", async () => {
    // OWASP ASVS 5.0 §7.4.1 (from memory).
    const start = new Date("2030-03-01T08:00:00Z");
    const { token, sessionId, user } = await signedIn(start);
    const ended = await endSession(prisma, { session: { token }, reason: "sign_out", now: minutesAfter(start, 5) });
    expect(ended).toEqual({ sessionId, userId: user.id });
    expect(await validateSession(prisma, { token, now: minutesAfter(start, 6), policy })).toBeNull();
    // Signing out twice is harmless and records one event.
    expect(await endSession(prisma, { session: { token }, reason: "sign_out", now: minutesAfter(start, 7) })).toBeNull();
    const events = await prisma.auditEvent.findMany({ where: { subjectId: user.id, action: "session.signed_out" } });
    expect(events).toHaveLength(1);
    expect(events[0].actorId).toBe(user.id);
  });

  it("every sign-in gets a new token, and the one the browser still sent is ended", async () => {
    // OWASP ASVS 5.0 §7.2.4 new session token on authentication (from memory).
    const start = new Date("2030-03-01T08:00:00Z");
    const first = await signedIn(start);
    const second = await signIn(prisma, {
      email: first.user.email,
      password: TEST_PASSWORD,
      ipAddress: "192.0.2.10",
      now: minutesAfter(start, 1),
      previousSessionToken: first.token,
      sessionPolicy: policy,
      wait: noWait,
    });
    expect(second.ok).toBe(true);
    if (!second.ok) return;
    expect(second.token).not.toBe(first.token);
    expect(second.sessionId).not.toBe(first.sessionId);
    expect(await validateSession(prisma, { token: first.token, now: minutesAfter(start, 2), policy })).toBeNull();
    expect((await validateSession(prisma, { token: second.token, now: minutesAfter(start, 2), policy }))?.user.email).toBe(first.user.email);
  });

  it("an unknown or empty token is no session", async () => {
    const now = new Date("2030-03-01T08:00:00Z");
    expect(await validateSession(prisma, { token: "not-a-token", now, policy })).toBeNull();
    expect(await validateSession(prisma, { token: "", now, policy })).toBeNull();
  });

  it("a successful sign-in is recorded with the session it opened", async () => {
    const start = new Date("2030-03-01T08:00:00Z");
    const { user, sessionId } = await signedIn(start);
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { subjectId: user.id, action: "session.signed_in" } });
    expect(event.payload).toEqual({ sessionId });
    expect(event.actorLabel).toBe(user.email);
    expect(event.ipAddress).toBe("192.0.2.10");
  });
});
