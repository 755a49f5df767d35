import { beforeAll, describe, expect, it } from "vitest";
import { verifyAuditChain } from "@/lib/audit/verify-audit-chain";
import { useTestDatabase } from "@/tests/support/test-database";
import { createUser, recordSettingsEvents } from "@/tests/audit/audit-fixtures";

const database = await useTestDatabase();
let ids: bigint[] = [];

beforeAll(async () => {
  const admin = await createUser(database.pool, { role: "admin" });
  ids = await recordSettingsEvents(database.prisma, admin.actor, 3);
});

// The test connection is the server's superuser and the table's owner: the triggers refuse
// it too, which is the point (only switching the triggers off gets past them).
describe("the audit table is append-only", () => {
  it("refuses UPDATE, even from the table's owner", async () => {
    await expect(database.pool.query("UPDATE audit_events SET actor_label = 'someone.else@example.org' WHERE id = $1", [ids[1]])).rejects.toMatchObject({
      code: "42501",
      message: "audit_events is append-only: UPDATE is not allowed",
    });
  });

  it("refuses DELETE of one event and of all events", async () => {
    await expect(database.pool.query("DELETE FROM audit_events WHERE id = $1", [ids[1]])).rejects.toMatchObject({ code: "42501", message: expect.stringContaining("DELETE") });
    await expect(database.pool.query("DELETE FROM audit_events")).rejects.toMatchObject({ code: "42501" });
  });

  it("refuses TRUNCATE", async () => {
    await expect(database.pool.query("TRUNCATE audit_events")).rejects.toMatchObject({ code: "42501", message: expect.stringContaining("TRUNCATE") });
  });

  it("refuses changes made through the Prisma client as well", async () => {
    await expect(database.prisma.auditEvent.update({ where: { id: ids[0] }, data: { action: "settings.viewed" } })).rejects.toThrow(/append-only/);
    await expect(database.prisma.auditEvent.deleteMany({})).rejects.toThrow(/append-only/);
  });

  it("leaves every event as it was after the refused attempts", async () => {
    const report = await verifyAuditChain(database.prisma);
    expect(report).toMatchObject({ intact: true, verified: 3 });
    const { rows } = await database.pool.query("SELECT count(*)::int AS n FROM audit_events WHERE actor_label LIKE 'someone.else%'");
    expect(rows[0].n).toBe(0);
  });
});
