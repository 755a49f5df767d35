// Timings of the Workload screen and the capacity planner on a realistic volume: 1,000,000 alerts over
// 60 days (about 16,700 a day) from three model versions, 3% below-the-line samples, everything older
// than six hours closed by twenty analysts (one outcome each), the last six hours open (about 4,200),
// 60 of them in review. Skipped unless WORKLOAD_BENCH=1, since generating the data takes a while:
//   WORKLOAD_BENCH=1 npx vitest run tests/workload/workload-volume
import { beforeAll, describe, expect, it } from "vitest";
import { Prisma } from "@/lib/generated/prisma/client";
import { useTestDatabase } from "@/tests/support/test-database";
import { getWorkload } from "@/lib/workload/get-workload";
import { planCapacity } from "@/lib/workload/plan-capacity";
import { capacityQuerySchema } from "@/lib/workload/schemas";

const enabled = process.env.WORKLOAD_BENCH === "1";
const database = enabled ? await useTestDatabase() : null;
const now = new Date("2026-12-02T12:00:00Z");
const ALERTS = Number(process.env.WORKLOAD_BENCH_ALERTS ?? 1_000_000);

async function timed<T>(label: string, run: () => Promise<T>, repeats = 5): Promise<T> {
  let result: T | undefined;
  const times: number[] = [];
  for (let i = 0; i < repeats; i++) {
    const start = performance.now();
    result = await run();
    times.push(performance.now() - start);
  }
  times.sort((a, b) => a - b);
  console.log(`${label}: median ${times[repeats >> 1].toFixed(0)} ms (min ${times[0].toFixed(0)}, max ${times.at(-1)!.toFixed(0)}) over ${repeats} runs`);
  return result!;
}

/** The client with each $queryRaw timed and logged by its first SQL line, to see which query costs what. */
function timingClient<T extends object>(client: T): T {
  return new Proxy(client, {
    get(target, property, receiver) {
      const value = Reflect.get(target, property, receiver);
      if (property !== "$queryRaw" || typeof value !== "function") return value;
      return async (strings: TemplateStringsArray, ...values: unknown[]) => {
        const start = performance.now();
        const result = await (value as (s: TemplateStringsArray, ...v: unknown[]) => Promise<unknown>).call(target, strings, ...values);
        const firstLine = strings.join("?").trim().split("\n")[0].slice(0, 90);
        const ms = performance.now() - start;
        console.log(`  ${ms.toFixed(0).padStart(6)} ms  ${firstLine}`);
        if (ms > 100 && process.env.WORKLOAD_BENCH_EXPLAIN === "1") {
          const plan = await (value as (q: Prisma.Sql) => Promise<{ "QUERY PLAN": string }[]>).call(target, Prisma.sql`EXPLAIN (ANALYZE, BUFFERS) ${Prisma.sql(strings, ...values)}`);
          console.log(plan.map((row) => row["QUERY PLAN"]).join("\n"));
        }
        return result;
      };
    },
  });
}

describe.skipIf(!enabled)(`workload queries on ${ALERTS.toLocaleString("en")} alerts`, () => {
  beforeAll(async () => {
    const prisma = database!.prisma;
    await prisma.$executeRawUnsafe(`
      INSERT INTO model_versions (model_name, version, score_kind, alert_threshold, prior_hit_rate)
      VALUES ('card-gbm', '5.1.0', 'probability', 0.5, NULL), ('card-gbm', '5.2.0', 'probability', 0.55, NULL),
             ('spend-ae', '2.0.3', 'anomaly', 4, 0.12)`);
    await prisma.$executeRawUnsafe(`
      INSERT INTO users (email, display_name, role)
      SELECT 'analyst' || i || '@example.test', 'Analyst ' || lpad(i::text, 2, '0'), 'analyst' FROM generate_series(1, 20) i`);
    const start = performance.now();
    await prisma.$executeRawUnsafe(`
      WITH v AS (SELECT array_agg(id ORDER BY model_name, version) ids FROM model_versions),
           raw AS (
             SELECT i, random() AS u, random() AS w, random() AS x,
                    timestamptz '${now.toISOString()}' - interval '60 days' + (i::float8 / ${ALERTS}) * interval '60 days' AS received_at
               FROM generate_series(1, ${ALERTS}) i)
      INSERT INTO alerts (external_id, content_hash, received_at, occurred_at, amount_minor, currency, channel,
                          merchant_category_code, merchant_country, entity_ref, model_version_id, score, probability,
                          exposure_minor, expected_loss_minor, due_at, below_the_line, inclusion_probability, state, closed_at, final_outcome)
      SELECT 'b' || i, 'h', received_at, received_at, amount, 'EUR', 'card_not_present', '5999', 'NL', 'tok',
             (SELECT ids[1 + (i % 3)] FROM v),
             CASE WHEN i % 3 = 2 THEN 4 + 6 * u ELSE CASE WHEN i % 33 = 0 THEN 0.5 * u ELSE 0.5 + 0.5 * u END END,
             0.1 + 0.5 * u, amount * 0.9, round(amount * 0.9 * (0.1 + 0.5 * u)),
             received_at + CASE WHEN amount * 0.9 * (0.1 + 0.5 * u) >= 50000 THEN interval '4 hours'
                                WHEN amount * 0.9 * (0.1 + 0.5 * u) >= 5000 THEN interval '24 hours' ELSE interval '48 hours' END,
             i % 33 = 0 AND i % 3 <> 2, CASE WHEN i % 33 = 0 AND i % 3 <> 2 THEN 0.05 END,
             CASE WHEN received_at < timestamptz '${now.toISOString()}' - interval '6 hours' THEN 'closed' ELSE 'waiting' END,
             CASE WHEN received_at < timestamptz '${now.toISOString()}' - interval '6 hours' THEN received_at + interval '3 hours' END,
             CASE WHEN received_at < timestamptz '${now.toISOString()}' - interval '6 hours' THEN 'legitimate' END
        FROM (SELECT *, round(exp(7 + 1.5 * x))::bigint AS amount FROM raw) r`);
    await prisma.$executeRawUnsafe(`
      WITH r AS (SELECT array_agg(id ORDER BY email) ids FROM users)
      INSERT INTO outcomes (alert_id, review_round, outcome, reason, reviewer_id, claimed_at, closed_at, handling_seconds)
      SELECT a.id, 1, a.final_outcome, 'bench', (SELECT ids[1 + abs(hashtext(a.external_id)) % 20] FROM r),
             a.closed_at - interval '5 minutes', a.closed_at, 60 + abs(hashtext(a.external_id || 'h')) % 900
        FROM alerts a WHERE a.state = 'closed'`);
    // Three alerts in review per analyst, claimed in the last half hour.
    await prisma.$executeRawUnsafe(`
      WITH r AS (SELECT id, row_number() OVER (ORDER BY email) n FROM users),
           pick AS (SELECT id, row_number() OVER (ORDER BY received_at) n FROM alerts WHERE state = 'waiting' LIMIT 60)
      UPDATE alerts a SET state = 'in_review', assigned_to_id = r.id, claimed_at = timestamptz '${now.toISOString()}' - interval '20 minutes',
                          lease_expires_at = timestamptz '${now.toISOString()}' + interval '10 minutes'
        FROM pick JOIN r ON r.n = 1 + (pick.n - 1) % 20
       WHERE a.id = pick.id`);
    await prisma.$executeRawUnsafe(`VACUUM ANALYZE alerts`);
    await prisma.$executeRawUnsafe(`VACUUM ANALYZE outcomes`);
    console.log(`generated ${ALERTS} alerts in ${((performance.now() - start) / 1000).toFixed(0)} s`);
  }, 1_800_000);

  it("reads the backlog from the open-alerts index only", async () => {
    const prisma = database!.prisma;
    const plan = await prisma.$queryRawUnsafe<{ "QUERY PLAN": string }[]>(`
      EXPLAIN (ANALYZE, BUFFERS)
      SELECT state, coalesce(due_at <= now(), false), currency, count(*), sum(expected_loss_minor)
        FROM alerts WHERE state <> 'closed' GROUP BY 1, 2, 3`);
    const text = plan.map((row) => row["QUERY PLAN"]).join("\n");
    console.log(text);
    expect(text).toMatch(/Index Only Scan using alerts_open_received_idx/);
  });

  it("answers the Workload screen", async () => {
    await getWorkload(timingClient(database!.prisma), { now });
    const workload = await timed("getWorkload", () => getWorkload(database!.prisma, { now }));
    expect(workload.totals.open).toBeGreaterThan(0);
    expect(workload.analysts).toHaveLength(20);
    console.log(JSON.stringify({ totals: workload.totals, team: workload.team }));
  });

  it("answers the capacity planner over 14 days", async () => {
    await planCapacity(timingClient(database!.prisma), { query: capacityQuerySchema.parse({ capacity: "3000" }), now });
    const answer = await timed("planCapacity", () => planCapacity(database!.prisma, { query: capacityQuerySchema.parse({ capacity: "3000" }), now }), 3);
    expect(answer.modelVersions).toHaveLength(3);
    for (const version of answer.modelVersions) {
      console.log(
        `${version.modelName} ${version.version}: ${version.observed.alertsPerDay.toFixed(0)} alerts/day, threshold ${version.threshold.threshold?.toFixed(3)}, ` +
          `by score ${version.queueByScore.expectedLossCaughtPerDayMinor.toFixed(0)}, by EL ${version.queueByExpectedLoss.expectedLossCaughtPerDayMinor.toFixed(0)}`,
      );
    }
  });
});
