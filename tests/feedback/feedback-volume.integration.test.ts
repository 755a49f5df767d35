// Timings of the feedback queries on a realistic volume: 200,000 alerts over six weeks (about 4,800 a
// day) from two model versions, 85% closed by ten reviewers, 5% with a second review, 4% with a late
// label, 2% below-the-line samples. Skipped unless FEEDBACK_BENCH=1, since generating the data takes
// a while:  FEEDBACK_BENCH=1 npx vitest run tests/feedback/feedback-volume
//
// Wall time depends on whatever else the machine runs, so each call also reports the CPU time it cost:
// in the PostgreSQL backend (one connection, parallel workers off, read from /proc, Linux only) and in
// Node (JSON parsing, PSI, AUC). On an idle machine the wall time is about their sum.
import { readFileSync } from "node:fs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createDatabaseHandles } from "@/lib/db/client";
import { useTestDatabase } from "@/tests/support/test-database";
import { getModelVersionMetrics } from "@/lib/feedback/get-model-version-metrics";
import { getReviewerMetrics } from "@/lib/feedback/get-reviewer-metrics";
import { parseModelVersionMetricsQuery, parseWindowQuery } from "@/lib/feedback/parse-metrics-query";

const enabled = process.env.FEEDBACK_BENCH === "1";
const database = enabled ? await useTestDatabase() : null;
const now = new Date("2026-12-02T12:00:00Z");
const ALERTS = Number(process.env.FEEDBACK_BENCH_ALERTS ?? 200_000);

const single = enabled ? createDatabaseHandles(database!.url, 1) : null;
let backendPid = 0;

/** CPU milliseconds (user + system) the backend process has used so far; clock ticks are 10 ms. */
function backendCpuMs(): number {
  const fields = readFileSync(`/proc/${backendPid}/stat`, "utf8").split(") ")[1].split(" ");
  return (Number(fields[11]) + Number(fields[12])) * 10;
}

async function timed<T>(label: string, run: () => Promise<T>, repeats = 5): Promise<T> {
  let result: T | undefined;
  const times: number[] = [];
  let databaseCpu = 0;
  let nodeCpu = 0;
  for (let i = 0; i < repeats; i++) {
    const start = performance.now();
    const cpuBefore = backendCpuMs();
    const nodeBefore = process.cpuUsage();
    result = await run();
    const node = process.cpuUsage(nodeBefore);
    nodeCpu += (node.user + node.system) / 1000;
    databaseCpu += backendCpuMs() - cpuBefore;
    times.push(performance.now() - start);
  }
  times.sort((a, b) => a - b);
  console.log(
    `${label}: wall median ${times[repeats >> 1].toFixed(0)} ms (min ${times[0].toFixed(0)}); ` +
      `CPU per call: PostgreSQL ${(databaseCpu / repeats).toFixed(0)} ms, Node ${(nodeCpu / repeats).toFixed(0)} ms`,
  );
  return result!;
}

describe.skipIf(!enabled)(`feedback queries on ${ALERTS.toLocaleString("en")} alerts`, () => {
  beforeAll(async () => {
    const prisma = database!.prisma;
    await prisma.$executeRawUnsafe(`
      INSERT INTO model_versions (model_name, version, score_kind, alert_threshold)
      VALUES ('card-gbm', '4.2.0', 'probability', 0.3), ('card-gbm', '4.3.0', 'probability', 0.3)`);
    await prisma.$executeRawUnsafe(`
      INSERT INTO users (email, display_name, role)
      SELECT 'reviewer' || i || '@example.test', 'Reviewer ' || i, 'analyst' FROM generate_series(1, 10) i`);
    const start = performance.now();
    await prisma.$executeRawUnsafe(`
      WITH v AS (SELECT array_agg(id ORDER BY version) ids FROM model_versions),
           raw AS (
             SELECT i, random() AS u, random() AS w,
                    timestamptz '2026-10-21 00:00Z' + (i::float8 / ${ALERTS}) * interval '42 days' AS received_at
               FROM generate_series(1, ${ALERTS}) i)
      INSERT INTO alerts (external_id, content_hash, received_at, occurred_at, amount_minor, currency, channel,
                          merchant_category_code, merchant_country, entity_ref, model_version_id, score, probability,
                          calibrated, priority, below_the_line, inclusion_probability, state, closed_at, final_outcome)
      SELECT 'b' || i, 'h', received_at, received_at, 10000, 'EUR', 'card_not_present', '5999', 'NL', 'tok',
             (SELECT ids[1 + (i % 2)] FROM v), u, u, i % 3 = 0, u * 10500,
             i % 50 = 0, CASE WHEN i % 50 = 0 THEN 0.05 END,
             CASE WHEN w < 0.85 THEN 'closed' ELSE 'waiting' END,
             CASE WHEN w < 0.85 THEN received_at + interval '3 hours' END,
             CASE WHEN w < 0.85 THEN (CASE WHEN w < 0.08 THEN 'inconclusive' WHEN random() < u THEN 'confirmed_fraud' ELSE 'legitimate' END) END
        FROM raw`);
    await prisma.$executeRawUnsafe(`
      WITH r AS (SELECT array_agg(id ORDER BY email) ids FROM users)
      INSERT INTO outcomes (alert_id, review_round, outcome, reason, reviewer_id, claimed_at, closed_at, handling_seconds)
      SELECT a.id, 1, a.final_outcome, 'bench', (SELECT ids[1 + abs(hashtext(a.external_id)) % 10] FROM r),
             a.closed_at - interval '5 minutes', a.closed_at, 60 + abs(hashtext(a.external_id || 'h')) % 900
        FROM alerts a WHERE a.state = 'closed'`);
    await prisma.$executeRawUnsafe(`
      WITH r AS (SELECT array_agg(id ORDER BY email) ids FROM users)
      INSERT INTO outcomes (alert_id, review_round, outcome, reason, reviewer_id, claimed_at, closed_at, handling_seconds)
      SELECT o.alert_id, 2, CASE WHEN random() < 0.85 THEN o.outcome ELSE 'legitimate' END, 'bench',
             (SELECT ids[1 + (abs(hashtext(o.alert_id::text)) % 10 + 1) % 10] FROM r) ,
             o.closed_at + interval '10 minutes', o.closed_at + interval '15 minutes', 300
        FROM outcomes o WHERE o.review_round = 1 AND random() < 0.05`);
    await prisma.$executeRawUnsafe(`
      INSERT INTO labels (alert_external_id, alert_id, label, source, observed_at)
      SELECT a.external_id, a.id, CASE WHEN random() < 0.8 THEN 'fraud' ELSE 'genuine' END,
             CASE WHEN random() < 0.7 THEN 'chargeback' ELSE 'customer_report' END, a.received_at + interval '30 days'
        FROM alerts a WHERE random() < 0.04`);
    await prisma.$executeRawUnsafe("ANALYZE");
    console.log(`generated ${ALERTS} alerts in ${((performance.now() - start) / 1000).toFixed(1)} s`);
    await single!.pool.query("SET max_parallel_workers_per_gather = 0");
    backendPid = (await single!.pool.query<{ pid: number }>("SELECT pg_backend_pid() AS pid")).rows[0].pid;
  }, 600_000);

  afterAll(async () => {
    await single?.prisma.$disconnect();
    await single?.pool.end();
  });

  it("answers model health and reviewer quality for the last 28 days", async () => {
    const prisma = single!.prisma;
    const models = await timed("model versions, last 28 days (default drift windows)", () =>
      getModelVersionMetrics(prisma, { query: parseModelVersionMetricsQuery(new URLSearchParams("")), now }),
    );
    expect(models.modelVersions).toHaveLength(2);
    expect(models.modelVersions[0].received).toBeGreaterThan(ALERTS / 5);
    await timed("model versions, one week", () =>
      getModelVersionMetrics(prisma, { query: parseModelVersionMetricsQuery(new URLSearchParams("window=week&date=2026-11-25")), now }),
    );
    const reviewers = await timed("reviewers, last 28 days", () => getReviewerMetrics(prisma, { query: parseWindowQuery(new URLSearchParams("")), now }));
    expect(reviewers.reviewers).toHaveLength(10);
    await timed("reviewers, one week", () => getReviewerMetrics(prisma, { query: parseWindowQuery(new URLSearchParams("window=week&date=2026-11-25")), now }));
  }, 600_000);
});
