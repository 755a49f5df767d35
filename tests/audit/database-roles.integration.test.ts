// The deployment note's separate roles, proven: the app's role may INSERT and SELECT on audit_events
// and nothing else there, so even without the triggers it cannot rewrite the log. The migration
// owner (here the test server's superuser) keeps the rest. The statements in appRoleGrants() are
// the ones a deployer runs for the app's role; keep the deployment note in step with them.
import { randomBytes } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createDatabaseHandles } from "@/lib/db/client";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import { linkStagedAuditEvents, stageAuditEvent } from "@/lib/audit/staged-audit-events";
import { verifyAuditChain } from "@/lib/audit/verify-audit-chain";
import { useTestDatabase } from "@/tests/support/test-database";
import { createUser } from "@/tests/audit/audit-fixtures";

const database = await useTestDatabase();
const appRole = `td_app_${randomBytes(4).toString("hex")}`;
const password = randomBytes(12).toString("hex");
let app: ReturnType<typeof createDatabaseHandles>;

function appRoleGrants(role: string, databaseName: string): string[] {
  return [
    `CREATE ROLE ${role} LOGIN PASSWORD '${password}' NOSUPERUSER NOCREATEDB NOCREATEROLE NOREPLICATION NOBYPASSRLS`,
    `GRANT CONNECT ON DATABASE ${databaseName} TO ${role}`,
    `GRANT USAGE ON SCHEMA public TO ${role}`,
    `GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA public TO ${role}`,
    `GRANT USAGE, SELECT ON ALL SEQUENCES IN SCHEMA public TO ${role}`,
    `REVOKE ALL ON audit_events FROM ${role}`,
    `GRANT SELECT, INSERT ON audit_events TO ${role}`,
    `REVOKE UPDATE, TRUNCATE ON audit_events_staged FROM ${role}`,
  ];
}

beforeAll(async () => {
  for (const statement of appRoleGrants(appRole, database.name)) await database.pool.query(statement);
  const url = new URL(database.url);
  url.username = appRole;
  url.password = password;
  app = createDatabaseHandles(url.toString(), 4);
});

afterAll(async () => {
  await app?.prisma.$disconnect();
  await app?.pool.end();
  await database.pool.query(`DROP OWNED BY ${appRole}`);
  await database.pool.query(`DROP ROLE IF EXISTS ${appRole}`);
});

describe("the app's database role on audit_events", () => {
  it("holds exactly SELECT and INSERT", async () => {
    const { rows } = await database.pool.query(
      "SELECT privilege_type FROM information_schema.table_privileges WHERE grantee = $1 AND table_name = 'audit_events' ORDER BY 1",
      [appRole],
    );
    expect(rows.map((row) => row.privilege_type)).toEqual(["INSERT", "SELECT"]);
  });

  it("appends through recordAuditEvent and verifies the chain", async () => {
    const admin = await createUser(database.pool, { role: "admin" });
    await app.prisma.$transaction((tx) =>
      recordAuditEvent(tx, { actor: admin.actor, event: { action: "settings.changed", payload: { key: "queue", before: {}, after: { order: "expected_loss" } } } }),
    );
    expect(await verifyAuditChain(app.prisma)).toMatchObject({ intact: true, verified: 1 });
  });

  it("is refused UPDATE, DELETE and TRUNCATE by privilege, before any trigger runs", async () => {
    for (const statement of ["UPDATE audit_events SET actor_label = 'x'", "DELETE FROM audit_events", "TRUNCATE audit_events"]) {
      await expect(app.pool.query(statement), statement).rejects.toMatchObject({ code: "42501", message: "permission denied for table audit_events" });
    }
  });

  it("cannot switch the triggers off or drop the table, which only the owner may", async () => {
    await expect(app.pool.query("ALTER TABLE audit_events DISABLE TRIGGER USER")).rejects.toMatchObject({ code: "42501", message: "must be owner of table audit_events" });
    await expect(app.pool.query("DROP TABLE audit_events")).rejects.toMatchObject({ code: "42501" });
  });

  it("stages, links and reads staged events, but may not rewrite one while it waits to be linked", async () => {
    const analyst = await createUser(database.pool, { role: "analyst" });
    await app.prisma.$transaction((tx) =>
      stageAuditEvent(tx, { actor: analyst.actor, event: { action: "alert.claimed", payload: { alertId: "00000000-0000-4000-8000-0000000000c1", externalId: "C-1", leaseExpiresAt: "2026-12-02T12:30:00.000Z", how: "direct" } } }),
    );
    await expect(app.pool.query("UPDATE audit_events_staged SET actor_label = 'x'")).rejects.toMatchObject({ code: "42501" });
    expect(await linkStagedAuditEvents(app.prisma)).toBe(1);
    expect(await verifyAuditChain(app.prisma)).toMatchObject({ intact: true });
  });

  it("still changes the other tables it works on", async () => {
    const { rowCount } = await app.pool.query("UPDATE users SET display_name = display_name");
    expect(rowCount).toBeGreaterThan(0);
  });
});
