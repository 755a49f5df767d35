import { describe, expect, it } from "vitest";
import { recordAuditEvent, recordAuditEvents } from "@/lib/audit/record-audit-event";
import { verifyAuditChain } from "@/lib/audit/verify-audit-chain";
import { useTestDatabase } from "@/tests/support/test-database";

const database = await useTestDatabase();
const actor = { type: "system" as const, id: null, label: "test" };

describe("appending many audit events at once", () => {
  it("keeps one linear chain, in the given order, mixed with single appends", async () => {
    await database.prisma.$transaction((tx) =>
      recordAuditEvent(tx, { actor, event: { action: "settings.changed", payload: { key: "queue", before: 1, after: 2 } } }),
    );
    const emails = Array.from({ length: 40 }, (_, index) => `person${index}@example.test`);
    const recorded = await database.prisma.$transaction((tx) =>
      recordAuditEvents(
        tx,
        emails.map((email) => ({ actor, event: { action: "user.created" as const, payload: { email, role: "analyst" } } })),
      ),
    );
    await database.prisma.$transaction((tx) =>
      recordAuditEvent(tx, { actor, event: { action: "settings.changed", payload: { key: "queue", before: 2, after: 3 } } }),
    );

    const rows = await database.prisma.auditEvent.findMany({ where: { action: "user.created" }, orderBy: { id: "asc" } });
    expect(rows.map((row) => (row.payload as { email: string }).email)).toEqual(emails);
    expect(rows.map((row) => row.hash)).toEqual(recorded.map((event) => event.hash));
    const report = await verifyAuditChain(database.prisma);
    expect(report).toMatchObject({ intact: true, verified: 42 });
  });

  it("writes nothing when one event of the batch is invalid", async () => {
    const before = await database.prisma.auditEvent.count();
    await expect(
      database.prisma.$transaction((tx) =>
        recordAuditEvents(tx, [
          { actor, event: { action: "user.created", payload: { email: "a@example.test", role: "analyst" } } },
          // @ts-expect-error a payload that does not match its action must be refused
          { actor, event: { action: "user.created", payload: { email: 42 } } },
        ]),
      ),
    ).rejects.toThrow(/audit event user.created/);
    expect(await database.prisma.auditEvent.count()).toBe(before);
  });
});
