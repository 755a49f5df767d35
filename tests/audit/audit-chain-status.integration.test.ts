import { afterEach, describe, expect, it } from "vitest";
import { verifyAuditChain } from "@/lib/audit/verify-audit-chain";
import { checkAuditChainForScreen, forgetLastFullWalk, FULL_WALK_EVERY_MS } from "@/lib/audit/audit-chain-status";
import { useTestDatabase, type TestDatabase } from "@/tests/support/test-database";
import { createUser, recordSettingsEvents, withTriggersDisabled } from "@/tests/audit/audit-fixtures";

// The screen walks the chain in full at most hourly and, in between, walks on from where the last
// full walk ended. Each scenario breaks a database of its own.
async function chainOfSix(): Promise<{ database: TestDatabase; ids: string[]; actor: Awaited<ReturnType<typeof createUser>>["actor"] }> {
  const database = await useTestDatabase();
  const admin = await createUser(database.pool, { role: "admin" });
  const ids = (await recordSettingsEvents(database.prisma, admin.actor, 6)).map(String);
  return { database, ids, actor: admin.actor };
}

const growing = await chainOfSix();
const editedAfter = await chainOfSix();
const editedBefore = await chainOfSix();
const pointChanged = await chainOfSix();
const now = new Date("2026-12-02T09:00:00Z");
const later = (minutes: number) => new Date(now.getTime() + minutes * 60_000);

afterEach(() => forgetLastFullWalk());

describe("the Audit trail screen's chain check", () => {
  it("walks in full first, then only the events written since, and in full again after an hour or on request", async () => {
    const { database, actor } = growing;
    const first = await checkAuditChainForScreen(database.prisma, { now });
    expect(first).toMatchObject({ intact: true, verified: 6, resumedAfterId: null, walkedNow: 6, fullWalkAt: now });

    const added = (await recordSettingsEvents(database.prisma, actor, 3)).map(String);
    const resumed = await checkAuditChainForScreen(database.prisma, { now: later(10) });
    expect(resumed).toMatchObject({ intact: true, verified: 9, walkedNow: 3, fullWalkAt: now, headId: added[2] });
    // The same answer as a walk from the first event.
    const whole = await verifyAuditChain(database.prisma);
    expect(whole).toMatchObject({ intact: true, verified: 9 });
    expect(resumed.intact && resumed.headHash).toBe(whole.intact && whole.headHash);

    expect(await checkAuditChainForScreen(database.prisma, { now: later(20), full: true })).toMatchObject({ resumedAfterId: null, walkedNow: 9 });
    expect(await checkAuditChainForScreen(database.prisma, { now: later(20 + FULL_WALK_EVERY_MS / 60_000) })).toMatchObject({ resumedAfterId: null, walkedNow: 9 });
  });

  it("finds an event changed after the last full walk", async () => {
    const { database, ids, actor } = editedAfter;
    await checkAuditChainForScreen(database.prisma, { now });
    const added = (await recordSettingsEvents(database.prisma, actor, 2)).map(String);
    await withTriggersDisabled(database.pool, `UPDATE audit_events SET payload = jsonb_set(payload, '{after,step}', '99') WHERE id = $1`, [added[0]]);
    const report = await checkAuditChainForScreen(database.prisma, { now: later(5) });
    expect(report).toMatchObject({ intact: false, verified: 6, brokenAt: { id: added[0], afterId: ids[5] } });
    // After a broken finding the next view walks in full.
    expect(await checkAuditChainForScreen(database.prisma, { now: later(6) })).toMatchObject({ intact: false, resumedAfterId: null });
  });

  it("misses an event changed before the last full walk until the next full walk, which the screen says it owes", async () => {
    const { database, ids } = editedBefore;
    await checkAuditChainForScreen(database.prisma, { now });
    await withTriggersDisabled(database.pool, `UPDATE audit_events SET payload = jsonb_set(payload, '{after,step}', '99') WHERE id = $1`, [ids[2]]);
    // The trade-off of resuming, stated on the screen: "recomputed from the first event on at 09:00 UTC".
    expect(await checkAuditChainForScreen(database.prisma, { now: later(5) })).toMatchObject({ intact: true, resumedAfterId: ids[5], fullWalkAt: now });
    expect(await checkAuditChainForScreen(database.prisma, { now: later(6), full: true })).toMatchObject({ intact: false, brokenAt: { id: ids[2] } });
  });

  it("refuses to resume from an event that was changed since the full walk", async () => {
    const { database, ids } = pointChanged;
    await checkAuditChainForScreen(database.prisma, { now });
    await withTriggersDisabled(database.pool, "UPDATE audit_events SET hash = repeat('0', 64) WHERE id = $1", [ids[5]]);
    expect(await checkAuditChainForScreen(database.prisma, { now: later(5) })).toMatchObject({
      intact: false,
      brokenAt: { id: ids[5], reason: expect.stringContaining("where the last full walk ended") },
    });
  });
});
