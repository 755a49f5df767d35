import { execFile } from "node:child_process";
import path from "node:path";
import { promisify } from "node:util";
import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createUser, recordSettingsEvents, withTriggersDisabled } from "@/tests/audit/audit-fixtures";

const database = await useTestDatabase();
const run = promisify(execFile);

async function auditVerify(...args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  try {
    const { stdout, stderr } = await run(path.resolve("node_modules/.bin/tsx"), ["--conditions=react-server", "lib/cli/audit-verify.ts", ...args], {
      env: { ...process.env, DATABASE_URL: database.url },
    });
    return { code: 0, stdout, stderr };
  } catch (error) {
    const failed = error as { code: number; stdout: string; stderr: string };
    return { code: failed.code, stdout: failed.stdout, stderr: failed.stderr };
  }
}

let ids: bigint[] = [];
beforeAll(async () => {
  const admin = await createUser(database.pool, { role: "admin" });
  ids = await recordSettingsEvents(database.prisma, admin.actor, 4);
});

describe("npm run audit:verify", () => {
  it("prints the count and head hash and exits 0; a head hash passed back as anchor is found", async () => {
    const first = await auditVerify();
    expect(first.code).toBe(0);
    const match = /^verified 4 events, head hash ([0-9a-f]{64})\n$/.exec(first.stdout);
    expect(match).not.toBeNull();
    const again = await auditVerify("--anchor", match![1]);
    expect(again).toMatchObject({ code: 0, stdout: `verified 4 events, head hash ${match![1]}\nanchor ${match![1]} found at event ${ids[3]}\n` });
  });

  it("refuses an anchor that is not a hash, and exits 1 for a hash the chain does not contain", async () => {
    expect(await auditVerify("--anchor", "yesterday")).toMatchObject({ code: 1, stderr: expect.stringContaining("is not a SHA-256 hash") });
    const missing = await auditVerify("--anchor", "ab".repeat(32));
    expect(missing.code).toBe(1);
    expect(missing.stderr).toContain("missing anchor");
  });

  it("prints the broken link and exits 1 after tampering", async () => {
    await withTriggersDisabled(database.pool, "UPDATE audit_events SET actor_label = 'someone.else@example.org' WHERE id = $1", [ids[2]]);
    const broken = await auditVerify();
    expect(broken.code).toBe(1);
    expect(broken.stderr).toBe(`broken link at event ${ids[2]} (settings.changed): its content no longer matches its hash (the event was changed after it was written); 2 events before it verified\n`);
    const json = await auditVerify("--json");
    expect(JSON.parse(json.stdout)).toMatchObject({ intact: false, verified: 2, brokenAt: { id: String(ids[2]) } });
  });
});
