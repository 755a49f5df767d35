// npm run bench [-- --scale N] — how fast Triage Desk is at a given number of alerts, measured on an
// embedded PostgreSQL of its own (durable, like a real server) next to what the database itself can do
// on the same machine in the same run. Prints a table and writes .bench/latest.json plus a dated copy.
// Targets are those of issue 11, stated for 1,000,000 alerts on a 2-core machine.
import { chmod, copyFile, mkdir, mkdtemp, rm, writeFile } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { from as copyFrom, to as copyTo } from "pg-copy-streams";
import { pipeline } from "node:stream/promises";
import { Readable, Writable } from "node:stream";
import { parseArguments, runCommand } from "@/lib/cli/run-command";
import { ensureLocalServer } from "@/lib/db/local-server";
import { createDatabaseIfMissing } from "@/lib/db/default-database";
import { applyPendingMigrations } from "@/lib/db/migrations";
import { createDatabaseHandles } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { systemActor, type UserActor } from "@/lib/auth/actor";
import { saveModelVersion } from "@/lib/model-versions/save-model-version";
import { ingestAlertBatches } from "@/lib/ingest/ingest-alerts";
import { updateSettings } from "@/lib/settings/update-settings";
import { getSettings } from "@/lib/settings/get-settings";
import { claimNextAlert } from "@/lib/queue/claim-next-alert";
import { markOverdueAlerts } from "@/lib/queue/mark-overdue-alerts";
import { backgroundLinkingSettled } from "@/lib/audit/staged-audit-events";
import { QUEUE_ORDER_BY } from "@/lib/queue/list-waiting-alerts";
import { CLAIMED_ALERT_COLUMNS } from "@/lib/queue/claimed-alert-columns";
import { fitIsotonicCalibration } from "@/lib/risk";
import { refitCalibration } from "@/lib/calibration/refit-calibration";
import { seededRandom } from "@/demo-data/random";
import { findWaitingAlerts } from "@/lib/queue/find-waiting-alerts";
import { getAlertDetail } from "@/lib/alerts/get-alert-detail";
import { getModelVersionMetrics } from "@/lib/feedback/get-model-version-metrics";
import { getReviewerMetrics } from "@/lib/feedback/get-reviewer-metrics";
import { modelVersionMetricsQuerySchema, windowQuerySchema } from "@/lib/feedback/schemas";
import { getWorkload } from "@/lib/workload/get-workload";
import { planCapacity } from "@/lib/workload/plan-capacity";
import { capacityQuerySchema } from "@/lib/workload/schemas";
import { BENCH_MODEL, generateBenchAlerts } from "@/lib/bench/generate-alerts";
import { spawnSync } from "node:child_process";
import { describeMachine, elapsedMs, formatTable, ms, perSecond, repeat, summarize, timed, type BenchRow, type LatencySummary } from "@/lib/bench/support";

const INGEST_BATCH = 10_000;
/**
 * Alerts a day in the generated history: an invented but plausible volume for a card issuer whose
 * models alert on a few thousand transactions a day (the demo's team of ten closes a few hundred).
 */
const ALERTS_PER_DAY = 3_000;
const CLAIMERS = 16;
/** The hold limit's maximum in Settings: each claimer takes this many alerts per phase. */
const CLAIMS_PER_CLAIMER = 50;
/**
 * Take next and the bare statement are timed in alternating rounds (ROUNDS of
 * CLAIMS_PER_CLAIMER / ROUNDS claims per claimer each, the one or the other first in turn), so both
 * meet the same machine: this one is shared, and a quiet or busy minute, or the full-page writes
 * that follow a checkpoint, had landed on one phase and not the other when each ran as one block
 * (take next ÷ bare 1.6× to 2.2× across three runs).
 */
const ROUNDS = 5;
/**
 * Untimed claims per claimer of each path before the timed rounds, as on a server that has been up:
 * the first claims of a process pay for opening pooled connections, preparing the claim's statements
 * on each and compiling the code path. On a kept 1,000,000-alert database take next used 5 ms of Node
 * CPU a claim over a process's first 160 claims, 0.7–1.3 ms up to about 1,600 and 0.4–0.6 ms after.
 * The warm-up claimers take the hold limit's 50 each (800 claims). They are counted in the
 * double-claim and audit checks.
 */
const WARMUP_CLAIMS = CLAIMS_PER_CLAIMER;
/**
 * Claims by one analyst alone, take next and the bare statement in turn: the time of a claim when
 * nobody else is claiming, which is what an analyst's click meets on all but the busiest minute.
 */
const SOLO_CLAIMS = 40;

interface Context {
  url: string;
  prisma: ReturnType<typeof createDatabaseHandles>["prisma"];
  pool: pg.Pool;
  now: Date;
  scale: number;
  /** Days the alerts arrive over, evenly: the dashboards' 30-day window holds 30/historyDays of them. */
  historyDays: number;
  rows: BenchRow[];
  results: Record<string, unknown>;
  log: (line: string) => void;
}

async function benchIngest(context: Context): Promise<string> {
  const { prisma, pool, now, scale } = context;
  const actor = systemActor("bench");
  const { modelVersion } = await saveModelVersion(prisma, { actor, input: BENCH_MODEL });
  const alerts = generateBenchAlerts(scale, now, { days: context.historyDays });

  context.log(`ingest: ${scale.toLocaleString("en")} alerts through ingestAlertBatches (pipelined) in batches of ${INGEST_BATCH.toLocaleString("en")}…`);
  // As `npm run ingest` sends a file: batches pipelined, each checked and priced while the ones
  // before are being stored (two side by side, each in its own transaction).
  let inserted = 0;
  const start = process.hrtime.bigint();
  const batches = (function* () {
    for (let offset = 0; offset < alerts.length; offset += INGEST_BATCH) yield { rows: alerts.slice(offset, offset + INGEST_BATCH), rowOffset: offset, now };
  })();
  await ingestAlertBatches(prisma, batches, { actor, channel: "command_line", allowReceivedAt: true }, (answer) => {
    inserted += answer.accepted;
  });
  const ingestMs = elapsedMs(start);
  const { rows: countRows } = await pool.query<{ n: string }>("SELECT count(*)::text AS n FROM alerts");
  if (Number(countRows[0].n) !== scale) throw new AppError("unavailable", `ingest stored ${countRows[0].n} alerts, expected ${scale}`);

  // The same rows, byte for byte as the real path stored them, COPY'd back into the same table:
  // read out, the table emptied (TRUNCATE; nothing refers to the alerts yet), and loaded again with
  // the same indexes, constraints and foreign keys. The rest of the benchmark then works on
  // identical data.
  context.log("ingest: raw COPY of the same rows into the same (emptied) alerts table…");
  const client = await pool.connect();
  try {
    const chunks: Buffer[] = [];
    await pipeline(client.query(copyTo("COPY alerts TO STDOUT")), new Writable({ write(chunk: Buffer, _encoding, done) { chunks.push(chunk); done(); } }));
    await client.query("TRUNCATE alerts CASCADE");
    await client.query("CHECKPOINT");
    const copyStart = process.hrtime.bigint();
    await pipeline(Readable.from(chunks), client.query(copyFrom("COPY alerts FROM STDIN")));
    const copyMs = elapsedMs(copyStart);
    const ingestRate = scale / (ingestMs / 1000);
    const copyRate = scale / (copyMs / 1000);
    const ratio = ingestRate / copyRate;
    context.results.ingest = { alerts: scale, inserted, batchRows: INGEST_BATCH, ingestSeconds: ingestMs / 1000, ingestAlertsPerSecond: Math.round(ingestRate), copySeconds: copyMs / 1000, copyAlertsPerSecond: Math.round(copyRate), ratio: Number(ratio.toFixed(3)) };
    context.rows.push(
      { section: "ingest", measure: "real ingest path (ingestAlertBatches, pipelined)", figure: perSecond(ingestRate, "alerts") },
      { section: "ingest", measure: "raw COPY, same rows into the same table", figure: perSecond(copyRate, "alerts") },
      { section: "ingest", measure: "real ÷ COPY", figure: `${(ratio * 100).toFixed(0)} %`, target: "≥ 50 %", met: ratio >= 0.5 },
    );
  } finally {
    client.release();
  }
  return modelVersion.id;
}

async function createAnalysts(pool: pg.Pool, count: number): Promise<UserActor[]> {
  const { rows } = await pool.query<{ id: string; email: string; display_name: string }>(
    `INSERT INTO users (email, display_name, role)
     SELECT 'bench-analyst-' || n || '@example.org', 'Bench analyst ' || n, 'analyst' FROM generate_series(1, $1::int) n
     RETURNING id, email, display_name`,
    [count],
  );
  return rows.map((row) => ({ type: "user", id: row.id, email: row.email, displayName: row.display_name, role: "analyst", sessionId: null }));
}

async function benchClaiming(context: Context): Promise<void> {
  const { prisma, pool, now } = context;
  // Claimers timed through take next, claimers of the bare statement, take next's warm-up claimers
  // (others, so that the timed ones start from nothing held, as the hold limit caps at 50), and the
  // analyst who claims alone (and another for the bare claims between, which the hold limit would count).
  const analysts = await createAnalysts(pool, CLAIMERS * 3 + 2);
  const takeNextClaimers = analysts.slice(0, CLAIMERS);
  const bareClaimers = analysts.slice(CLAIMERS, 2 * CLAIMERS);
  const warmupClaimers = analysts.slice(2 * CLAIMERS, 3 * CLAIMERS);
  const soloClaimer = analysts[3 * CLAIMERS];
  const soloBareClaimer = analysts[3 * CLAIMERS + 1];
  const settings = await getSettings(prisma);
  await updateSettings(prisma, { actor: { type: "system", id: null, label: "bench" }, key: "queue", value: { ...settings.queue, maxHeldPerAnalyst: CLAIMS_PER_CLAIMER } });
  const claimed: string[] = [];

  // The generated history is received over past days with a day to review each alert, so nearly all
  // of it falls due at once at the first claim. That one-off mass mark is timed on its own; the
  // claims are then timed on a queue whose marks are current and whose old row versions autovacuum
  // has cleared, as on a working day.
  // A CHECKPOINT then writes out what the mass mark changed, so that the timed rounds below do not
  // pay for it. One run at 1,000,000 alerts had take next at 87 claims/s (p99 1.7 s) against 256–295
  // in the runs before and after; writing out a million changed rows during it is the likely cause
  // (not proven).
  const { value: markedOverdue, ms: markMs } = await timed(() => markOverdueAlerts(prisma, { now }));
  await pool.query("VACUUM ANALYZE alerts");
  await pool.query("CHECKPOINT");
  context.rows.push({ section: "claiming", measure: `one-off: marking ${markedOverdue.toLocaleString("en")} alerts overdue at once (markOverdueAlerts)`, figure: ms(markMs) });

  // The bare claim: the same statement (text of claim-next-alert.ts, same ORDER BY and RETURNING),
  // one per transaction through pg alone: no lease expiry, overdue sweep, settings, hold limit or audit.
  const statement = `WITH next AS (
      SELECT a.id FROM alerts a WHERE a.state = 'waiting' ORDER BY ${QUEUE_ORDER_BY.sql} LIMIT 1 FOR UPDATE SKIP LOCKED)
    UPDATE alerts a SET state = 'in_review', assigned_to_id = $1::uuid, claimed_at = $2, lease_expires_at = $3
      FROM next WHERE a.id = next.id
    RETURNING ${CLAIMED_ALERT_COLUMNS.sql}`;
  const leaseExpiresAt = new Date(now.getTime() + 30 * 60_000);
  const takeNext = async (actor: UserActor) => {
    const value = await claimNextAlert({ prisma, pool }, { actor, now });
    if (value) claimed.push(value.id);
  };
  const bareClaim = async (client: pg.PoolClient, actor: UserActor) => {
    const { rows } = await client.query<{ id: string }>(statement, [actor.id, now, leaseExpiresAt]);
    if (rows[0]) claimed.push(rows[0].id);
  };
  /** `claims` claims by each claimer at once; the latencies, and the time from the first start to the last end. */
  const concurrentClaims = async (claimers: number, claims: number, claim: (claimer: number) => Promise<void>) => {
    const latencies: number[] = [];
    const start = process.hrtime.bigint();
    await Promise.all(
      Array.from({ length: claimers }, async (_unused, claimer) => {
        for (let index = 0; index < claims; index += 1) latencies.push((await timed(() => claim(claimer))).ms);
      }),
    );
    return { latencies, ms: elapsedMs(start) };
  };

  const bareClients: pg.PoolClient[] = [];
  const appLatencies: number[] = [];
  const bareLatencies: number[] = [];
  const soloApp: number[] = [];
  const soloBare: number[] = [];
  let appMs = 0;
  let bareMs = 0;
  try {
    for (let index = 0; index < CLAIMERS; index += 1) bareClients.push(await pool.connect());
    context.log(`claiming: warm-up, ${CLAIMERS} claimers × ${WARMUP_CLAIMS} claims through claimNextAlert and as many bare statements…`);
    await concurrentClaims(CLAIMERS, WARMUP_CLAIMS, (claimer) => takeNext(warmupClaimers[claimer]));
    await concurrentClaims(CLAIMERS, WARMUP_CLAIMS, (claimer) => bareClaim(bareClients[claimer], bareClaimers[claimer]));

    const perRound = CLAIMS_PER_CLAIMER / ROUNDS;
    context.log(`claiming: ${CLAIMERS} concurrent claimers × ${CLAIMS_PER_CLAIMER} claims through claimNextAlert and as many bare statements through pg, in ${ROUNDS} alternating rounds…`);
    for (let round = 0; round < ROUNDS; round += 1) {
      const appRound = () => concurrentClaims(CLAIMERS, perRound, (claimer) => takeNext(takeNextClaimers[claimer]));
      const bareRound = () => concurrentClaims(CLAIMERS, perRound, (claimer) => bareClaim(bareClients[claimer], bareClaimers[claimer]));
      const [first, second] = round % 2 === 0 ? [appRound, bareRound] : [bareRound, appRound];
      // Take next's audit events are linked in the background; the last link of a round is let
      // finish before the other path's round, so that the bare statement does not pay for it.
      const firstResult = await first();
      await backgroundLinkingSettled();
      const secondResult = await second();
      await backgroundLinkingSettled();
      const [app, bare] = round % 2 === 0 ? [firstResult, secondResult] : [secondResult, firstResult];
      appLatencies.push(...app.latencies);
      bareLatencies.push(...bare.latencies);
      appMs += app.ms;
      bareMs += bare.ms;
    }

    context.log(`claiming: one analyst alone, ${SOLO_CLAIMS} take next and ${SOLO_CLAIMS} bare claims in turn…`);
    const soloClient = bareClients[0];
    for (let index = 0; index < SOLO_CLAIMS; index += 1) {
      soloApp.push((await timed(() => takeNext(soloClaimer))).ms);
      soloBare.push((await timed(() => bareClaim(soloClient, soloBareClaimer))).ms);
    }
  } finally {
    for (const client of bareClients) client.release();
  }

  // Claims stage their audit events and link them into the chain in the background: wait for the
  // last link, and check every claim is in the trail exactly once.
  const { ms: linkLagMs } = await timed(() => backgroundLinkingSettled());
  const { rows: auditRows } = await pool.query<{ events: string; alerts: string }>(
    "SELECT count(*)::text AS events, count(DISTINCT subject_id)::text AS alerts FROM audit_events WHERE action = 'alert.claimed'",
  );
  const auditedClaims = Number(auditRows[0].events);
  const auditedAlerts = Number(auditRows[0].alerts);

  const appClaims = CLAIMERS * (WARMUP_CLAIMS + CLAIMS_PER_CLAIMER) + SOLO_CLAIMS;
  const expected = 2 * appClaims;
  const distinct = new Set(claimed).size;
  const { rows } = await pool.query<{ n: string }>("SELECT count(*)::text AS n FROM alerts WHERE state = 'in_review'");
  const inReview = Number(rows[0].n);
  const auditWhole = auditedClaims === appClaims && auditedAlerts === appClaims;
  const pass = claimed.length === expected && distinct === claimed.length && inReview === claimed.length && auditWhole;
  const app = summarize(appLatencies);
  const bare = summarize(bareLatencies);
  const solo = { takeNext: summarize(soloApp), bareStatement: summarize(soloBare) };
  const appRate = appLatencies.length / (appMs / 1000);
  const bareRate = bareLatencies.length / (bareMs / 1000);
  context.results.claiming = { markedOverdueAtOnce: markedOverdue, markOverdueMs: markMs, claimers: CLAIMERS, claimsPerClaimer: CLAIMS_PER_CLAIMER, rounds: ROUNDS, takeNext: { ...app, claimsPerSecond: Math.round(appRate) }, bareStatement: { ...bare, claimsPerSecond: Math.round(bareRate) }, oneClaimerAlone: solo, auditedClaims, auditedAlerts, auditLinkLagMs: linkLagMs, claimed: claimed.length, distinct, inReview, doubleClaims: claimed.length - distinct, pass };
  const latencyFigure = (summary: LatencySummary) => `p50 ${ms(summary.p50Ms)} · p95 ${ms(summary.p95Ms)} · p99 ${ms(summary.p99Ms)}`;
  context.rows.push(
    { section: "claiming", measure: `take next (claimNextAlert), ${CLAIMERS} claimers`, figure: latencyFigure(app), target: "p95 < 10 ms", met: app.p95Ms < 10 },
    { section: "claiming", measure: `bare claim statement (pg), ${CLAIMERS} claimers, in alternating rounds with take next`, figure: latencyFigure(bare) },
    { section: "claiming", measure: "take next p95 ÷ bare p95", figure: `${(app.p95Ms / bare.p95Ms).toFixed(1)}×`, target: "≤ 2×", met: app.p95Ms <= 2 * bare.p95Ms },
    { section: "claiming", measure: "claims per second (take next / bare)", figure: `${Math.round(appRate).toLocaleString("en")} / ${Math.round(bareRate).toLocaleString("en")}` },
    { section: "claiming", measure: "one analyst claiming alone (nobody else claiming)", figure: `take next p50 ${ms(solo.takeNext.p50Ms)}, p95 ${ms(solo.takeNext.p95Ms)} · bare p50 ${ms(solo.bareStatement.p50Ms)}, p95 ${ms(solo.bareStatement.p95Ms)}` },
    { section: "claiming", measure: "claims in the audit chain (once each) · linking lag after the last claim", figure: `${auditedClaims} of ${appClaims} · ${ms(linkLagMs)}`, target: "all", met: auditWhole },
    { section: "claiming", measure: "double claims", figure: `${claimed.length - distinct} of ${claimed.length} (in_review ${inReview}) ${pass ? "PASS" : "FAIL"}`, target: "0", met: pass },
  );
}

const READ_RUNS = 20;
/** Share of the alerts still waiting that are closed with outcomes before the read queries run. */
const CLOSED_SHARE = 0.8;

/**
 * Closes CLOSED_SHARE of the waiting alerts set-based, the way a team's history looks: a first-review
 * outcome by one of the analysts (fraud with the alert's probability), closed within a day of
 * arrival, and a chargeback for one in twelve of them. Outcomes and labels are written in the order
 * they would have been recorded (by close and by report), so the tables lie on disk as a real
 * history's would: a window's outcomes together, not scattered over the whole table.
 */
async function closeHistory(context: Context, reviewerIds: string[]): Promise<number> {
  const { pool, now } = context;
  const threshold = Math.round(CLOSED_SHARE * 1000);
  const client = await pool.connect();
  try {
    await client.query("BEGIN");
    const { rowCount } = await client.query(
      `UPDATE alerts a
          SET state = 'closed', assigned_to_id = ($1::uuid[])[1 + abs(hashtext(a.external_id || 'r')) % cardinality($1::uuid[])],
              claimed_at = c.closed_at - make_interval(secs => 60 + abs(hashtext(a.external_id || 'h')) % 900),
              closed_at = c.closed_at,
              final_outcome = CASE WHEN (abs(hashtext(a.external_id || 'o')) % 10000) / 10000.0 < coalesce(a.probability, 0.1) THEN 'confirmed_fraud'
                                   WHEN abs(hashtext(a.external_id || 'i')) % 40 = 0 THEN 'inconclusive' ELSE 'legitimate' END,
              lease_expires_at = NULL
         FROM (SELECT id, least(received_at + make_interval(mins => 5 + abs(hashtext(external_id || 'c')) % 1440), $2::timestamptz) AS closed_at
                 FROM alerts WHERE state = 'waiting' AND abs(hashtext(external_id)) % 1000 < $3) c
        WHERE a.id = c.id`,
      [reviewerIds, now, threshold],
    );
    await client.query(
      `INSERT INTO outcomes (alert_id, review_round, outcome, reason, reviewer_id, claimed_at, closed_at, handling_seconds, origin)
       SELECT id, 1, final_outcome, 'Benchmark history', assigned_to_id, claimed_at, closed_at, extract(epoch FROM closed_at - claimed_at)::int, 'imported'
         FROM alerts WHERE state = 'closed'
        ORDER BY closed_at`,
    );
    await client.query(
      `INSERT INTO labels (alert_external_id, alert_id, label, source, observed_at, received_at, reference)
       SELECT external_id, id, CASE WHEN final_outcome = 'legitimate' THEN 'genuine' ELSE 'fraud' END, 'chargeback',
              occurred_at + interval '5 days', occurred_at + interval '7 days', 'CB-' || external_id
         FROM alerts WHERE state = 'closed' AND abs(hashtext(external_id || 'l')) % 12 = 0 AND occurred_at + interval '7 days' <= $1
        ORDER BY occurred_at`,
      [now],
    );
    await client.query("COMMIT");
    return rowCount ?? 0;
  } catch (error) {
    await client.query("ROLLBACK");
    throw error;
  } finally {
    client.release();
  }
}

/**
 * The open-alerts index (alerts_open_received_idx, keyed on arrival) as steady work leaves it. In a
 * team's history alerts close in about the order they arrived, so whole leaf pages of old entries
 * empty and VACUUM recycles them; closeHistory instead closes 80 % of a year's alerts at random in one
 * statement, which leaves every page a fifth full and the index several times its size (112 MB
 * against 11 MB at 1,000,000 alerts). The workload screen is timed on that index once, reported
 * without a target, and the index is then rebuilt as operators would after such a bulk close
 * (README, Limits: REINDEX INDEX CONCURRENTLY).
 */
async function rebuildOpenAlertsIndex(context: Context, workload: () => Promise<unknown>): Promise<{ asLeft: LatencySummary; bytes: { asLeft: number; rebuilt: number } }> {
  const { pool } = context;
  const indexBytes = async () => Number((await pool.query<{ n: string }>("SELECT pg_relation_size('alerts_open_received_idx')::text AS n")).rows[0].n);
  context.log(`reads: workload × ${READ_RUNS} on the open-alerts index as the bulk close left it…`);
  const asLeft = summarize(await repeat(READ_RUNS, workload));
  const asLeftBytes = await indexBytes();
  await pool.query("REINDEX INDEX alerts_open_received_idx");
  const rebuiltBytes = await indexBytes();
  const mib = (bytes: number) => `${(bytes / 2 ** 20).toFixed(0)} MiB`;
  context.rows.push({
    section: "reads",
    measure: `workload right after closing 80 % of the history at random in one statement (open-alerts index ${mib(asLeftBytes)}; rebuilt for the rows below: ${mib(rebuiltBytes)})`,
    figure: `p50 ${ms(asLeft.p50Ms)} · p95 ${ms(asLeft.p95Ms)}`,
  });
  return { asLeft, bytes: { asLeft: asLeftBytes, rebuilt: rebuiltBytes } };
}

async function benchReads(context: Context, modelVersionId: string): Promise<void> {
  const { prisma, pool, now } = context;
  const { rows: reviewers } = await pool.query<{ id: string }>("SELECT id FROM users WHERE role = 'analyst' ORDER BY email");
  context.log(`reads: closing ${CLOSED_SHARE * 100} % of the waiting alerts with outcomes (set-based SQL)…`);
  const { value: closed, ms: closeMs } = await timed(() => closeHistory(context, reviewers.map((row) => row.id)));
  await pool.query("VACUUM ANALYZE alerts");
  await pool.query("ANALYZE");
  const { rows: counts } = await pool.query<{ state: string; n: string }>("SELECT state, count(*)::text AS n FROM alerts GROUP BY state ORDER BY state");
  const stateCounts = Object.fromEntries(counts.map((row) => [row.state, Number(row.n)]));
  const { rows: sample } = await pool.query<{ id: string }>("SELECT id FROM alerts ORDER BY md5(id::text) LIMIT $1", [READ_RUNS + 1]);

  const day = (date: Date) => date.toISOString().slice(0, 10);
  const window = windowQuerySchema.parse({ window: "custom", from: day(new Date(now.getTime() - 30 * 86_400_000)), to: day(now) });
  const metricsQuery = { ...window, ...modelVersionMetricsQuerySchema.parse({}) };
  const { rows: inWindow } = await pool.query<{ alerts: number; closed: number }>(
    "SELECT count(*)::int AS alerts, count(*) FILTER (WHERE state = 'closed')::int AS closed FROM alerts WHERE received_at >= $1",
    [new Date(now.getTime() - 30 * 86_400_000)],
  );
  const windowNote = `30 days: ${inWindow[0].alerts.toLocaleString("en")} alerts, ${inWindow[0].closed.toLocaleString("en")} closed`;
  const capacityQuery = capacityQuerySchema.parse({ analysts: "12", hours: "7.5" });
  const modelHealth = () => getModelVersionMetrics(prisma, { query: { ...metricsQuery, modelVersionId: [modelVersionId] }, now });
  const reviewerQuality = () => getReviewerMetrics(prisma, { query: window, now });
  // The dashboards add up daily summaries and recompute the days marked since the last view. A busy
  // team closes alerts of today and yesterday and receives chargebacks for older days between two
  // views: each timed view here first finds three days marked (today, yesterday, 20 days ago), as
  // the triggers on alerts, outcomes and labels would mark them.
  const markRecentDays = async () => {
    await pool.query("INSERT INTO model_version_day_marks (model_version_id, day) SELECT $1, $2::date - d FROM unnest(ARRAY[0, 1, 20]) AS d", [modelVersionId, day(now)]);
    await pool.query("INSERT INTO reviewer_day_marks (day) SELECT $1::date - d FROM unnest(ARRAY[0, 1, 20]) AS d", [day(now)]);
  };
  // The first view computes every day of its span from the alerts: once per day, for the first viewer.
  const { ms: firstModelHealthMs } = await timed(modelHealth);
  const { ms: firstReviewerQualityMs } = await timed(reviewerQuality);
  context.rows.push(
    { section: "reads", measure: "model-version metrics, first view ever (summarises the 30-day window and the drift span)", figure: ms(firstModelHealthMs) },
    { section: "reads", measure: "reviewer metrics, first view ever (summarises the 30-day window)", figure: ms(firstReviewerQualityMs) },
  );
  let detailIndex = 0;
  const measures: { measure: string; target: number; work: () => Promise<unknown>; prepare?: () => Promise<unknown> }[] = [
    { measure: "queue page data (findWaitingAlerts, first page)", target: 100, work: () => findWaitingAlerts(prisma, { now }) },
    { measure: "queue page data, filtered (channel, amount ≥ 100.00)", target: 100, work: () => findWaitingAlerts(prisma, { now, filter: { channel: "card_not_present", amountMinMinor: 10_000 } }) },
    { measure: "alert page data (getAlertDetail)", target: 100, work: () => getAlertDetail(prisma, { alertId: sample[detailIndex++ % sample.length].id, now }) },
    { measure: `model-version metrics (getModelVersionMetrics; ${windowNote}; 3 days changed since the last view)`, target: 300, work: modelHealth, prepare: markRecentDays },
    { measure: `reviewer metrics (getReviewerMetrics; ${windowNote}; 3 days changed since the last view)`, target: 300, work: reviewerQuality, prepare: markRecentDays },
    { measure: "workload (getWorkload)", target: 300, work: () => getWorkload(prisma, { now }) },
    { measure: "capacity plan (planCapacity)", target: 300, work: () => planCapacity(prisma, { query: capacityQuery, now }) },
  ];
  const summaries: Record<string, LatencySummary> = {};
  const workloadIndex = await rebuildOpenAlertsIndex(context, () => getWorkload(prisma, { now }));
  summaries["workload, open-alerts index as the bulk close left it"] = workloadIndex.asLeft;
  for (const { measure, target, work, prepare } of measures) {
    context.log(`reads: ${measure} × ${READ_RUNS}…`);
    const summary = summarize(await repeat(READ_RUNS, work, 1, prepare));
    summaries[measure] = summary;
    context.rows.push({ section: "reads", measure, figure: `p50 ${ms(summary.p50Ms)} · p95 ${ms(summary.p95Ms)}`, target: `p95 < ${target} ms`, met: summary.p95Ms < target });
  }
  context.results.reads = {
    window: inWindow[0],
    closedBySql: closed,
    closeSeconds: closeMs / 1000,
    stateCounts,
    runsEach: READ_RUNS,
    firstViewMs: { modelVersionMetrics: firstModelHealthMs, reviewerMetrics: firstReviewerQualityMs },
    openAlertsIndexBytes: workloadIndex.bytes,
    latencies: summaries,
  };
}

const EXPORT_ROWS = 1_000_000;

async function benchExport(context: Context, folder: string): Promise<void> {
  const { pool, now, scale } = context;
  const { rows: people } = await pool.query<{ id: string }>(
    "INSERT INTO users (email, display_name, role) VALUES ('bench-supervisor@example.org', 'Bench supervisor', 'supervisor') RETURNING id",
  );
  // Alerts arrive evenly over the history: above a million, export the latest million or so.
  const spanDays = context.historyDays * Math.min(1, EXPORT_ROWS / scale);
  const { rows: versions } = await pool.query<{ id: string }>("SELECT id FROM model_versions");
  const choices = {
    modelVersionIds: versions.map((row) => row.id),
    occurredFrom: new Date(now.getTime() - spanDays * 86_400_000 - 3_600_000).toISOString(),
    occurredTo: now.toISOString(),
    asOf: now.toISOString(),
    maturityDays: 0,
    keepInconclusive: true,
    keepUnreviewed: true,
    includeBelowTheLine: true,
    format: "csv",
  };
  context.log(`export: label export (csv) of up to ${Math.min(scale, EXPORT_ROWS).toLocaleString("en")} rows in a child process…`);
  const script = path.resolve(process.cwd(), "lib", "bench", "export-child.ts");
  const child = spawnSync(process.execPath, [...process.execArgv, script, context.url, JSON.stringify(choices), people[0].id, path.join(folder, "exports"), now.toISOString()], {
    encoding: "utf8",
    maxBuffer: 16 * 2 ** 20,
  });
  const line = child.stdout.trim().split("\n").pop() ?? "";
  if (child.status !== 0 || !line.startsWith("{")) {
    throw new AppError("unavailable", `the export child failed (exit ${child.status}): ${child.stderr.trim().split("\n").slice(-3).join(" | ")}`);
  }
  const result = JSON.parse(line) as { status: string; error: string | null; rows: number; seconds: number; fileBytes: number; baselineRssMiB: number; peakRssMiB: number };
  if (result.status !== "done") throw new AppError("unavailable", `the label export failed: ${result.error}`);
  context.results.export = { format: "csv", requestedRows: Math.min(scale, EXPORT_ROWS), ...result };
  const smaller = result.rows < EXPORT_ROWS ? ` (${result.rows.toLocaleString("en")} rows: the scale's, not 1,000,000)` : "";
  context.rows.push(
    { section: "export", measure: `label export, csv${smaller}`, figure: `${result.seconds.toFixed(1)} s, ${perSecond(result.rows / result.seconds, "rows")}`, target: "< 20 s", met: result.seconds < 20 },
    { section: "export", measure: "label export peak RSS (baseline before export)", figure: `${Math.round(result.peakRssMiB)} MiB (${Math.round(result.baselineRssMiB)} MiB)`, target: "< 300 MB", met: result.peakRssMiB * 1.048576 < 300 },
  );
}

async function benchCalibrationFit(context: Context): Promise<void> {
  const labels = 1_000_000;
  const random = seededRandom(7);
  const points = new Array<{ score: number; label: 0 | 1 }>(labels);
  for (let index = 0; index < labels; index += 1) {
    const score = random.next();
    points[index] = { score: Number(score.toFixed(4)), label: random.chance(score * score) ? 1 : 0 };
  }
  context.log("calibration: fitIsotonicCalibration on 1,000,000 labels…");
  fitIsotonicCalibration(points.slice(0, 10_000));
  const latencies: number[] = [];
  let knots = 0;
  for (let run = 0; run < 3; run += 1) {
    const start = process.hrtime.bigint();
    const map = fitIsotonicCalibration(points);
    latencies.push(elapsedMs(start));
    knots = map.scores.length;
  }
  const summary = summarize(latencies);
  context.results.calibrationFit = { labels, knots, ...summary };
  context.rows.push({ section: "calibration", measure: "fitIsotonicCalibration, 1,000,000 labels (p50 of 3)", figure: ms(summary.p50Ms), target: "< 1 s", met: summary.p50Ms < 1000 });
}

/**
 * refitCalibration on the database: reads the version's reviewed alerts, fits, stores the map and
 * re-derives every waiting alert of the version. Run last, as it changes the waiting alerts.
 */
async function benchRefit(context: Context, modelVersionId: string): Promise<void> {
  const { prisma, pool, now } = context;
  const { rows } = await pool.query<{ n: string }>(
    "SELECT count(*)::text AS n FROM alerts WHERE model_version_id = $1 AND final_outcome IN ('confirmed_fraud', 'legitimate')",
    [modelVersionId],
  );
  context.log(`calibration: refitCalibration on the database (${Number(rows[0].n).toLocaleString("en")} reviewed alerts)…`);
  const start = process.hrtime.bigint();
  try {
    const result = await refitCalibration(prisma, { actor: systemActor("bench"), modelVersionId, trigger: "on_demand", now });
    const seconds = elapsedMs(start) / 1000;
    context.results.refitCalibration = { seconds, labelCount: result.calibrationMap.labelCount, knots: result.calibrationMap.map.scores.length, recomputedAlerts: result.recomputedAlerts };
    context.rows.push({
      section: "calibration",
      measure: `refitCalibration on the database (${result.calibrationMap.labelCount.toLocaleString("en")} labels, ${result.recomputedAlerts.toLocaleString("en")} waiting re-derived)`,
      figure: `${(seconds * 1000).toFixed(0)} ms`,
    });
  } catch (error) {
    context.results.refitCalibration = { failed: (error as Error).message };
    context.rows.push({ section: "calibration", measure: "refitCalibration on the database", figure: `not fitted: ${(error as Error).message.split(": ")[0]}` });
  }
}

await runCommand(async () => {
  const { options } = parseArguments(process.argv.slice(2));
  const scale = options.scale === undefined ? 100_000 : Number(options.scale);
  // The claim phase alone takes 3,280 alerts (two paths × 16 claimers × 100 claims, and the solo claims).
  if (!Number.isInteger(scale) || scale < 5_000) throw new AppError("invalid_input", `--scale must be a whole number of at least 5000, got "${String(options.scale)}"`);
  // The history arrives at ALERTS_PER_DAY (at least 30 days of it), so a larger scale is a longer
  // history, as a team's grows, not a denser month; --history-days overrides it.
  const historyDays = options["history-days"] === undefined ? Math.max(30, Math.ceil(scale / ALERTS_PER_DAY)) : Number(options["history-days"]);
  if (!Number.isInteger(historyDays) || historyDays < 30) throw new AppError("invalid_input", `--history-days must be a whole number of at least 30, got "${String(options["history-days"])}"`);
  // --explain MS: PostgreSQL's auto_explain logs the EXPLAIN ANALYZE of every statement slower than
  // MS milliseconds; the plans are copied to .bench/ at the end. Timings are then a little slower.
  const explainMs = options.explain === undefined ? null : Number(options.explain);
  if (explainMs !== null && !(Number.isInteger(explainMs) && explainMs >= 0)) throw new AppError("invalid_input", `--explain takes a whole number of milliseconds, got "${String(options.explain)}"`);
  // --keep: leave the data folder in place after the run, to study the plans of a large history
  // without loading it again.
  const keep = options.keep !== undefined;
  const log = (line: string) => console.log(line);
  const machine = describeMachine();
  const startedAt = new Date();

  const folder = await mkdtemp(path.join(os.tmpdir(), "triage-desk-bench-"));
  await chmod(folder, 0o755);
  log(`bench: scale ${scale.toLocaleString("en")} alerts over ${historyDays} days; embedded PostgreSQL (durable) in ${folder}`);
  const serverLog = path.join(folder, "postgres.log");
  const server = await ensureLocalServer({ dataDir: path.join(folder, "pg"), durable: true, logFile: serverLog });
  const rows: BenchRow[] = [];
  const results: Record<string, unknown> = {};
  try {
    await createDatabaseIfMissing(server.urlFor("postgres"), "triage_bench");
    const url = server.urlFor("triage_bench");
    const admin = new pg.Client({ connectionString: url });
    await admin.connect();
    try {
      await applyPendingMigrations(admin);
      machine.postgres = (await admin.query<{ server_version: string }>("SHOW server_version")).rows[0].server_version;
      if (explainMs !== null) {
        // Every later connection to the benchmark database loads auto_explain with these settings.
        for (const [name, value] of [["session_preload_libraries", "auto_explain"], ["auto_explain.log_min_duration", `${explainMs}ms`], ["auto_explain.log_analyze", "on"], ["auto_explain.log_buffers", "on"], ["auto_explain.log_nested_statements", "on"]]) {
          await admin.query(`ALTER DATABASE triage_bench SET ${name} = '${value}'`);
        }
      }
    } finally {
      await admin.end();
    }
    const { prisma, pool } = createDatabaseHandles(url, CLAIMERS * 2 + 4);
    const context: Context = { url, prisma, pool, now: new Date(Date.UTC(2026, 5, 1, 12)), scale, historyDays, rows, results, log };
    try {
      const modelVersionId = await benchIngest(context);
      await pool.query("ANALYZE");
      await benchClaiming(context);
      await benchReads(context, modelVersionId);
      await benchCalibrationFit(context);
      await benchExport(context, folder);
      await benchRefit(context, modelVersionId);
    } finally {
      await prisma.$disconnect();
      await pool.end();
    }
  } finally {
    await server.stop();
    if (explainMs !== null) {
      await mkdir(path.resolve(process.cwd(), ".bench"), { recursive: true });
      await copyFile(serverLog, path.resolve(process.cwd(), ".bench", "slow-plans.log"));
      log("bench: plans of the statements slower than the --explain limit are in .bench/slow-plans.log");
    }
    if (keep) log(`bench: --keep: the benchmark's data folder stays in ${folder} (database triage_bench; start it with pg_ctl -D ${path.join(folder, "pg")})`);
    else await rm(folder, { recursive: true, force: true });
  }

  machine.loadAverageEnd = os.loadavg().map((value) => Number(value.toFixed(2)));
  const finishedAt = new Date();
  const loaded = machine.loadAverageStart[0] > machine.cpuCount || (machine.loadAverageEnd[0] ?? 0) > machine.cpuCount;
  console.log("");
  console.log(`Triage Desk benchmark — ${scale.toLocaleString("en")} alerts, ${finishedAt.toISOString()}`);
  console.log(`Machine: ${machine.cpuCount} × ${machine.cpuModel}, ${machine.totalMemoryGiB} GiB, ${machine.platform}, Node ${machine.node}, PostgreSQL ${machine.postgres}`);
  console.log(`Load average (1/5/15 min): start ${machine.loadAverageStart.join(" / ")}, end ${machine.loadAverageEnd.join(" / ")}`);
  if (loaded) console.log(`Note: the machine was busy with other work (load above its ${machine.cpuCount} CPUs), so these figures are pessimistic.`);
  console.log(`History: ${scale.toLocaleString("en")} alerts received evenly over ${historyDays} days (about ${Math.round(scale / historyDays).toLocaleString("en")} a day); the dashboards read the last 30 days.`);
  if (scale !== 1_000_000) console.log(`Note: targets are stated for 1,000,000 alerts; this run used ${scale.toLocaleString("en")}.`);
  console.log("");
  console.log(formatTable(rows));

  const report = { startedAt: startedAt.toISOString(), finishedAt: finishedAt.toISOString(), scale, historyDays, machine, busyMachine: loaded, results, table: rows };
  const outDir = path.resolve(process.cwd(), ".bench");
  await mkdir(outDir, { recursive: true });
  const json = `${JSON.stringify(report, null, 2)}\n`;
  const stamp = finishedAt.toISOString().replaceAll(":", "-").replace(/\.\d+Z$/, "Z");
  await writeFile(path.join(outDir, "latest.json"), json);
  await writeFile(path.join(outDir, `bench-${stamp}-scale-${scale}.json`), json);
  console.log("");
  console.log(`Written: .bench/latest.json and .bench/bench-${stamp}-scale-${scale}.json`);
  return results.claiming && (results.claiming as { pass: boolean }).pass ? 0 : 1;
});
