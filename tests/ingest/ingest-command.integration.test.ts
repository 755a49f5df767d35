// `npm run ingest` as a person runs it: a file in, a progress line on stderr, a summary on stdout,
// exit 1 when a row was refused.
import { execFile } from "node:child_process";
import { mkdtemp, writeFile } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { alertRow, labelRow, registerModelVersions } from "@/tests/ingest/factories";

const database = await useTestDatabase();
const run = promisify(execFile);
let folder = "";

async function ingest(...args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  try {
    const { stdout, stderr } = await run(path.resolve("node_modules/.bin/tsx"), ["--conditions=react-server", "lib/cli/ingest.ts", ...args], {
      env: { ...process.env, DATABASE_URL: database.url },
    });
    return { code: 0, stdout, stderr };
  } catch (error) {
    const failed = error as { code: number; stdout: string; stderr: string };
    return { code: failed.code, stdout: failed.stdout, stderr: failed.stderr };
  }
}

beforeAll(async () => {
  await registerModelVersions(database.prisma);
  folder = await mkdtemp(path.join(os.tmpdir(), "ingest-command-"));
});

// Each run starts tsx afresh (several seconds on a busy machine), hence the generous timeouts.
describe("npm run ingest", { timeout: 180_000 }, () => {
  it("ingests an NDJSON file in batches with progress and a summary", async () => {
    const file = path.join(folder, "alerts.ndjson");
    await writeFile(file, Array.from({ length: 25 }, () => JSON.stringify(alertRow())).join("\n"));
    const result = await ingest(file, "--batch-size", "10");
    expect(result.code).toBe(0);
    expect(result.stderr).toContain("alerts 25/25 · accepted 25");
    expect(result.stdout).toMatch(/alerts\.ndjson: 25 alerts rows in [\d.]+ s \(3 batches\): 25 accepted, 0 duplicate, 0 conflict, 0 rejected\./);
    const batches = await database.prisma.ingestBatch.findMany({ where: { fileName: "alerts.ndjson" } });
    expect(batches.map((batch) => [batch.channel, batch.rowCount])).toEqual(expect.arrayContaining([["command_line", 10], ["command_line", 5]]));
  });

  it("names refused rows with their file line and exits 1", async () => {
    const file = path.join(folder, "labels.csv");
    const rows = [labelRow(), labelRow({ label: "maybe" })];
    await writeFile(file, ["externalId,label,source,observedAt,reference", ...rows.map((row) => [row.externalId, row.label, row.source, row.observedAt, row.reference].join(","))].join("\n"));
    const result = await ingest(file, "--kind", "labels", "--atomic");
    expect(result.code).toBe(1);
    expect(result.stdout).toContain("0 accepted, 0 duplicate, 0 conflict, 2 rejected");
    expect(result.stdout).toContain("Atomic: nothing was stored");
    expect(result.stdout).toContain(`row 1 (line 3) ${rows[1].externalId}: label: expected one of fraud, genuine`);
  });

  it("explains a malformed file and a wrong kind in one line", async () => {
    const file = path.join(folder, "broken.json");
    await writeFile(file, '[{"externalId": "x",]');
    const broken = await ingest(file);
    expect(broken.code).toBe(1);
    expect(broken.stderr).toMatch(/^error: broken\.json: malformed JSON at line 1, column \d+/);
    const kind = await ingest(file, "--kind", "chargebacks");
    expect(kind.stderr).toContain("--kind must be one of alerts, labels, outcomes");
  });
});
