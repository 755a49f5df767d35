// Test factories for people. One real scrypt hash per test file (hashing costs about a second),
// shared by every user the file makes; rows are inserted directly so tests stay quick.
import { randomBytes } from "node:crypto";
import type { PrismaClient } from "@/lib/generated/prisma/client";
import { hashPassword } from "@/lib/auth/hash-password";
import type { UserActor } from "@/lib/auth/actor";
import type { Role } from "@/lib/auth/permissions";

export const TEST_PASSWORD = "correct-horse-battery-staple";

let sharedHash: Promise<string> | undefined;

export function testPasswordHash(): Promise<string> {
  sharedHash ??= hashPassword(TEST_PASSWORD);
  return sharedHash;
}

export interface MadeUser {
  id: string;
  email: string;
  displayName: string;
  role: Role;
  actor: UserActor;
}

export async function makeUser(prisma: PrismaClient, overrides: Partial<{ email: string; displayName: string; role: Role; active: boolean }> = {}): Promise<MadeUser> {
  const suffix = randomBytes(4).toString("hex");
  const role = overrides.role ?? "analyst";
  const row = await prisma.user.create({
    data: {
      email: overrides.email ?? `${role}.${suffix}@test.example`,
      displayName: overrides.displayName ?? `Test ${role} ${suffix}`,
      role,
      active: overrides.active ?? true,
      passwordHash: await testPasswordHash(),
    },
  });
  return {
    id: row.id,
    email: row.email,
    displayName: row.displayName,
    role,
    actor: { type: "user", id: row.id, email: row.email, displayName: row.displayName, role, sessionId: null },
  };
}

export function minutesAfter(start: Date, minutes: number): Date {
  return new Date(start.getTime() + minutes * 60_000);
}

export async function auditActions(prisma: PrismaClient, subjectId: string): Promise<string[]> {
  const events = await prisma.auditEvent.findMany({ where: { subjectId }, orderBy: { id: "asc" }, select: { action: true } });
  return events.map((event) => event.action);
}
