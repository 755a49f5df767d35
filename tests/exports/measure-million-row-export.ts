// Manual check, not part of the test run: how long a label export of a million rows takes and how
// much memory the exporting process holds at its peak, per format.
//
//   npx tsx --conditions=react-server tests/exports/measure-million-row-export.ts [rows=1000000]
//       [--formats=csv,jsonl,parquet] [--row-group-rows=50000[,20000…]] [--max-heap-mb=N]
//
// --max-heap-mb caps the child's V8 heap (--max-old-space-size): an export that held its rows in
// memory would fail under a cap far below the size of its output.
//
// Measured 2026-12-02, 1,000,000 rows, --max-heap-mb=128, 2 cores shared with other work (load average
// 16–24, so wall times are pessimistic; Node CPU seconds are the export's own work):
//   csv      225 s wall, 20.5 s Node CPU, 253 MiB file, peak RSS 211 MiB (161 MiB before exporting)
//   jsonl    197 s wall, 23.9 s Node CPU, 616 MiB file, peak RSS 260 MiB (174 MiB before)
//   parquet  362 s wall, 46.7 s Node CPU,  70 MiB file, peak RSS 276 MiB (162 MiB before), 20,000-row groups
//
// It starts a throwaway PostgreSQL in a temporary folder, applies the migrations, fills it with SQL
// (generate_series), then runs each format's export in a fresh child process so that each peak
// resident set size (getrusage maxrss) belongs to that export alone.
import { spawnSync } from "node:child_process";
import { chmod, mkdtemp, rm, stat } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import pg from "pg";
import { createDatabaseHandles } from "@/lib/db/client";
import { ensureLocalServer } from "@/lib/db/local-server";
import { applyPendingMigrations } from "@/lib/db/migrations";
import { createLabelExport } from "@/lib/exports/create-label-export";
import type { ExportFormat } from "@/lib/exports/schemas";

const AS_OF = "2026-06-01T00:00:00.000Z";

async function seed(url: string, rows: number): Promise<{ modelVersionId: string; supervisorId: string }> {
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  try {
    await applyPendingMigrations(client);
    const { rows: people } = await client.query<{ id: string; role: string }>(
      `INSERT INTO users (email, display_name, role)
       SELECT 'reviewer' || n || '@example.org', 'Reviewer ' || n, CASE WHEN n = 0 THEN 'supervisor' ELSE 'analyst' END
       FROM generate_series(0, 40) n RETURNING id, role`,
    );
    const { rows: versions } = await client.query<{ id: string }>(
      "INSERT INTO model_versions (model_name, version, score_kind, alert_threshold) VALUES ('card-gbm', '2026.1', 'probability', 0.5) RETURNING id",
    );
    const modelVersionId = versions[0].id;
    // Alerts spread over 2025; 3% below-the-line samples with π = 0.05.
    await client.query(
      `INSERT INTO alerts (external_id, content_hash, received_at, occurred_at, amount_minor, currency, channel, merchant_category_code,
                           merchant_country, entity_ref, model_version_id, score, probability, below_the_line, inclusion_probability,
                           state, closed_at, final_outcome)
       SELECT 'tx-' || lpad(n::text, 8, '0'), md5(n::text), t + interval '1 minute', t, 100 + (n::bigint * 7919) % 500000, 'EUR',
              (ARRAY['card_present', 'card_not_present', 'atm'])[1 + n % 3], lpad(((n * 31) % 10000)::text, 4, '0'), 'DE', 'tok_' || (n % 50000),
              $1, CASE WHEN n % 33 = 0 THEN 0.3 ELSE 0.5 + (n % 500) / 1000.0 END, (n % 997) / 1000.0,
              n % 33 = 0, CASE WHEN n % 33 = 0 THEN 0.05 END, 'closed', t + interval '3 hours',
              CASE WHEN n % 10 = 0 THEN 'confirmed_fraud' WHEN n % 29 = 0 THEN 'inconclusive' ELSE 'legitimate' END
       FROM generate_series(1, $2::int) n, LATERAL (SELECT timestamptz '2025-01-01' + (n::double precision / $2) * interval '360 days' AS t) x`,
      [modelVersionId, rows],
    );
    const reviewerIds = people.filter((person) => person.role === "analyst").map((person) => person.id);
    await client.query(
      `INSERT INTO outcomes (alert_id, review_round, outcome, reason, reviewer_id, claimed_at, closed_at, handling_seconds)
       SELECT a.id, 1, a.final_outcome, 'Measured', ($1::uuid[])[1 + (abs(hashtext(a.external_id)) % cardinality($1::uuid[]))],
              a.closed_at - interval '5 minutes', a.closed_at, 300
       FROM alerts a`,
      [reviewerIds],
    );
    // A chargeback for one alert in twelve, observed weeks later.
    await client.query(
      `INSERT INTO labels (alert_external_id, alert_id, label, source, observed_at, received_at, reference)
       SELECT a.external_id, a.id, 'fraud', 'chargeback', a.occurred_at + interval '40 days', a.occurred_at + interval '45 days', 'CB-' || a.external_id
       FROM alerts a WHERE abs(hashtext(a.external_id)) % 12 = 0`,
    );
    await client.query("ANALYZE");
    return { modelVersionId, supervisorId: people.find((person) => person.role === "supervisor")!.id };
  } finally {
    await client.end();
  }
}

async function child(url: string, format: ExportFormat, directory: string, modelVersionId: string, supervisorId: string, rowGroupRows: number | undefined): Promise<void> {
  const { prisma, pool } = createDatabaseHandles(url, 4);
  let peakHeap = 0;
  const sampler = setInterval(() => {
    peakHeap = Math.max(peakHeap, process.memoryUsage().heapUsed);
  }, 20);
  // What the process holds before exporting anything: Node, the Prisma client, a pool connection.
  await prisma.labelExport.count();
  const baselineRssMiB = Math.round(process.resourceUsage().maxRSS / 1024);
  const started = performance.now();
  const cpuBefore = process.cpuUsage();
  const job = await createLabelExport(
    { prisma, pool },
    {
      actor: { type: "user", id: supervisorId, email: "reviewer0@example.org", displayName: "Reviewer 0", role: "supervisor", sessionId: null },
      choices: {
        modelVersionIds: [modelVersionId],
        occurredFrom: "2025-01-01T00:00:00Z",
        occurredTo: "2026-01-01T00:00:00Z",
        asOf: AS_OF,
        maturityDays: 120,
        keepInconclusive: true,
        keepUnreviewed: false,
        includeBelowTheLine: true,
        format,
      },
      now: new Date(AS_OF),
      destination: { kind: "file", directory },
      rowGroupRows,
    },
  );
  const result = await job.completion;
  const seconds = (performance.now() - started) / 1000;
  const cpu = process.cpuUsage(cpuBefore);
  const nodeCpuSeconds = Number(((cpu.user + cpu.system) / 1e6).toFixed(1));
  clearInterval(sampler);
  const bytes = job.fileName ? (await stat(path.join(directory, job.fileName))).size : 0;
  // getrusage: ru_maxrss is in kilobytes on Linux; Node reports it as is.
  const peakRssMiB = process.resourceUsage().maxRSS / 1024;
  console.log(JSON.stringify({ format, rowGroupRows: format === "parquet" ? (rowGroupRows ?? "default") : undefined, maxHeapMiB: process.execArgv.find((arg) => arg.startsWith("--max-old-space-size"))?.split("=")[1], status: result.status, rows: result.rowCount, seconds: Number(seconds.toFixed(1)), nodeCpuSeconds, loadAverage: os.loadavg()[0].toFixed(1), rowsPerSecond: Math.round(result.rowCount / seconds), fileMiB: Number((bytes / 2 ** 20).toFixed(1)), baselineRssMiB, peakRssMiB: Math.round(peakRssMiB), peakHeapMiB: Math.round(peakHeap / 2 ** 20) }));
  await prisma.$disconnect();
  await pool.end();
}

async function main(): Promise<void> {
  if (process.argv[2] === "--child") {
    const [, , , url, format, directory, modelVersionId, supervisorId, rowGroupRows] = process.argv;
    await child(url, format as ExportFormat, directory, modelVersionId, supervisorId, rowGroupRows ? Number(rowGroupRows) : undefined);
    return;
  }
  const option = (name: string) => process.argv.find((arg) => arg.startsWith(`--${name}=`))?.split("=")[1];
  const rows = Number(process.argv.slice(2).find((arg) => !arg.startsWith("--")) ?? 1_000_000);
  const formats = (option("formats") ?? "csv,jsonl,parquet").split(",") as ExportFormat[];
  const rowGroupSizes = (option("row-group-rows") ?? "").split(",");
  const heap = option("max-heap-mb");
  const folder = await mkdtemp(path.join(os.tmpdir(), "triage-desk-export-measure-"));
  await chmod(folder, 0o755);
  const server = await ensureLocalServer({ dataDir: path.join(folder, "pg"), durable: false });
  try {
    const admin = new pg.Client({ connectionString: server.urlFor("postgres") });
    await admin.connect();
    await admin.query("CREATE DATABASE export_measure");
    await admin.end();
    const url = server.urlFor("export_measure");
    const seedStarted = performance.now();
    const { modelVersionId, supervisorId } = await seed(url, rows);
    console.log(`seeded ${rows.toLocaleString("en")} alerts in ${((performance.now() - seedStarted) / 1000).toFixed(0)} s`);
    const script = fileURLToPath(import.meta.url);
    for (const [format, rowGroupRows] of formats.flatMap((format) => (format === "parquet" ? rowGroupSizes : [""]).map((size) => [format, size] as const))) {
      const nodeArgs = [...process.execArgv, ...(heap ? [`--max-old-space-size=${heap}`] : [])];
      const run = spawnSync(process.execPath, [...nodeArgs, script, "--child", url, format, path.join(folder, "out"), modelVersionId, supervisorId, rowGroupRows], { stdio: "inherit" });
      if (run.status !== 0) console.log(JSON.stringify({ format, rowGroupRows, failed: `exited with ${run.status}` }));
    }
  } finally {
    await server.stop();
    await rm(folder, { recursive: true, force: true });
  }
}

await main();
