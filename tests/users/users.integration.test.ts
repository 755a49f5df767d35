import { describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { systemActor } from "@/lib/auth/actor";
import { isAppError } from "@/lib/errors";
import { signIn } from "@/lib/auth/sign-in";
import { validateSession } from "@/lib/auth/validate-session";
import { createUser } from "@/lib/users/create-user";
import { changeRole } from "@/lib/users/change-role";
import { deactivateUser } from "@/lib/users/deactivate-user";
import { reactivateUser } from "@/lib/users/reactivate-user";
import { changeOwnPassword } from "@/lib/users/change-own-password";
import { listUsers } from "@/lib/users/list-users";
import { TEST_PASSWORD, auditActions, makeUser, minutesAfter } from "@/tests/auth/factories";

const database = await useTestDatabase();
const { prisma } = database;
const policy = { idleTimeoutMs: 30 * 60_000, absoluteLifetimeMs: 12 * 3_600_000 };
const noWait = async () => undefined;
const start = new Date("2030-05-01T08:00:00Z");

async function sessionFor(email: string, password = TEST_PASSWORD, now = start) {
  const result = await signIn(prisma, { email, password, ipAddress: "192.0.2.50", now, sessionPolicy: policy, wait: noWait });
  if (!result.ok) throw new Error(`sign-in failed: ${result.message}`);
  return result;
}

async function failure(promise: Promise<unknown>): Promise<{ code: string; message: string }> {
  try {
    await promise;
  } catch (error) {
    if (isAppError(error)) return { code: error.code, message: error.message };
    throw error;
  }
  throw new Error("expected a failure");
}

describe("user administration", () => {
  it("deactivating a person ends all their sessions at once", async () => {
    // OWASP ASVS 5.0 §7.4.2 (from memory).
    const admin = await makeUser(prisma, { role: "admin" });
    const analyst = await makeUser(prisma);
    const first = await sessionFor(analyst.email);
    const second = await sessionFor(analyst.email);
    const result = await deactivateUser(prisma, { actor: admin.actor, userId: analyst.id, now: minutesAfter(start, 1) });
    expect(result).toEqual({ endedSessions: 2, alreadyInactive: false });
    for (const token of [first.token, second.token]) {
      expect(await validateSession(prisma, { token, now: minutesAfter(start, 2), policy })).toBeNull();
    }
    const sessions = await prisma.session.findMany({ where: { userId: analyst.id } });
    expect(sessions.map((session) => session.endedReason)).toEqual(["deactivated", "deactivated"]);
    expect(await auditActions(prisma, analyst.id)).toContain("user.deactivated");
    // And they cannot sign in again until reactivated.
    const again = await signIn(prisma, { email: analyst.email, password: TEST_PASSWORD, ipAddress: "192.0.2.50", now: minutesAfter(start, 3), wait: noWait });
    expect(again.ok).toBe(false);
    await reactivateUser(prisma, { actor: admin.actor, userId: analyst.id, now: minutesAfter(start, 4) });
    expect((await sessionFor(analyst.email, TEST_PASSWORD, minutesAfter(start, 5))).ok).toBe(true);
    expect(await auditActions(prisma, analyst.id)).toEqual(expect.arrayContaining(["user.deactivated", "user.reactivated"]));
  });

  it("the last active admin can be neither deactivated nor demoted", async () => {
    await prisma.user.updateMany({ where: { role: "admin" }, data: { role: "auditor" } });
    const onlyAdmin = await makeUser(prisma, { role: "admin" });
    const cli = systemActor("cli:test");
    expect(await failure(deactivateUser(prisma, { actor: cli, userId: onlyAdmin.id, now: start }))).toMatchObject({ code: "conflict", message: expect.stringMatching(/last active admin/) });
    expect(await failure(changeRole(prisma, { actor: cli, userId: onlyAdmin.id, role: "analyst", now: start }))).toMatchObject({ code: "conflict" });
    // A deactivated admin does not count.
    const inactiveAdmin = await makeUser(prisma, { role: "admin", active: false });
    expect(await failure(changeRole(prisma, { actor: cli, userId: onlyAdmin.id, role: "analyst", now: start }))).toMatchObject({ code: "conflict" });
    // With a second active admin, either may go, but not both.
    await reactivateUser(prisma, { actor: cli, userId: inactiveAdmin.id, now: start });
    expect(await changeRole(prisma, { actor: cli, userId: onlyAdmin.id, role: "analyst", now: start })).toEqual({ from: "admin", to: "analyst", changed: true });
    expect(await failure(deactivateUser(prisma, { actor: cli, userId: inactiveAdmin.id, now: start }))).toMatchObject({ code: "conflict" });
  });

  it("two admins removing each other at the same moment cannot both succeed", async () => {
    await prisma.user.updateMany({ where: { role: "admin" }, data: { role: "auditor" } });
    const a = await makeUser(prisma, { role: "admin" });
    const b = await makeUser(prisma, { role: "admin" });
    const results = await Promise.allSettled([
      deactivateUser(prisma, { actor: a.actor, userId: b.id, now: start }),
      deactivateUser(prisma, { actor: b.actor, userId: a.id, now: start }),
    ]);
    expect(results.filter((result) => result.status === "fulfilled")).toHaveLength(1);
    expect(await prisma.user.count({ where: { role: "admin", active: true } })).toBe(1);
  });

  it("an admin cannot deactivate their own account", async () => {
    const admin = await makeUser(prisma, { role: "admin" });
    await makeUser(prisma, { role: "admin" });
    expect(await failure(deactivateUser(prisma, { actor: admin.actor, userId: admin.id, now: start }))).toMatchObject({ code: "conflict" });
  });

  it("creating a user validates the input, refuses a taken email and records the event", async () => {
    const admin = await makeUser(prisma, { role: "admin" });
    const created = await createUser(prisma, { actor: admin.actor, email: " New.Person@Test.Example ", displayName: "New Person", role: "supervisor", password: "a long enough passphrase" });
    expect(created).toMatchObject({ email: "new.person@test.example", role: "supervisor", active: true });
    const stored = await prisma.user.findUniqueOrThrow({ where: { id: created.id } });
    expect(stored.passwordHash).toMatch(/^\$scrypt\$ln=16,r=8,p=2\$/);
    expect(stored.passwordHash).not.toContain("a long enough passphrase");
    expect(await failure(createUser(prisma, { actor: admin.actor, email: "new.person@test.example", displayName: "Again", role: "analyst", password: "a long enough passphrase" }))).toMatchObject({ code: "conflict" });
    expect(await failure(createUser(prisma, { actor: admin.actor, email: "short@test.example", displayName: "Short", role: "analyst", password: "short" }))).toMatchObject({ code: "invalid_input" });
    expect(await failure(createUser(prisma, { actor: admin.actor, email: "x@test.example", displayName: "X", role: "owner", password: "a long enough passphrase" }))).toMatchObject({ code: "invalid_input" });
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { subjectId: created.id, action: "user.created" } });
    expect(event).toMatchObject({ actorId: admin.id, payload: { email: "new.person@test.example", role: "supervisor" } });
    expect((await listUsers(prisma)).some((user) => user.id === created.id)).toBe(true);
  });

  it("changing one's own password needs the current one and ends the other sessions", async () => {
    // OWASP ASVS 5.0 §6.2.3 and §7.4.3 (from memory).
    const user = await makeUser(prisma);
    const here = await sessionFor(user.email);
    const elsewhere = await sessionFor(user.email);
    const actor = { ...here.user, sessionId: here.sessionId };
    expect(
      await failure(changeOwnPassword(prisma, { actor, currentPassword: "not it", newPassword: "a brand new passphrase", confirmPassword: "a brand new passphrase", now: start })),
    ).toMatchObject({ code: "invalid_input" });
    expect(
      await failure(changeOwnPassword(prisma, { actor, currentPassword: TEST_PASSWORD, newPassword: "a brand new passphrase", confirmPassword: "a different one!!", now: start })),
    ).toMatchObject({ code: "invalid_input" });
    const result = await changeOwnPassword(prisma, { actor, currentPassword: TEST_PASSWORD, newPassword: "a brand new passphrase", confirmPassword: "a brand new passphrase", now: minutesAfter(start, 1) });
    expect(result).toEqual({ endedOtherSessions: 1 });
    expect(await validateSession(prisma, { token: here.token, now: minutesAfter(start, 2), policy })).not.toBeNull();
    expect(await validateSession(prisma, { token: elsewhere.token, now: minutesAfter(start, 2), policy })).toBeNull();
    expect((await sessionFor(user.email, "a brand new passphrase", minutesAfter(start, 3))).ok).toBe(true);
    expect(await auditActions(prisma, user.id)).toContain("user.password_changed");
  });
});
