// The SQL aggregations give the numbers lib/metrics gives on the raw arrays: 600 random alerts with
// ties, probabilities on bin edges, open and inconclusive alerts and labels that overturn analysts.
import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { averagePrecision, brierScore, expectedCalibrationError, populationStabilityIndex, realizedPrecision, reliabilityTable, rocAuc } from "@/lib/metrics";
import { getModelVersionMetrics } from "@/lib/feedback/get-model-version-metrics";
import { parseModelVersionMetricsQuery } from "@/lib/feedback/parse-metrics-query";
import { seededRandom } from "@/tests/risk/seeded-random";

const database = await useTestDatabase();
const prisma = database.prisma;
const now = new Date("2026-12-02T12:00:00Z");

interface Synthetic {
  score: number;
  p: number;
  outcome: "confirmed_fraud" | "legitimate" | "inconclusive" | null;
  label: "fraud" | "genuine" | null;
}

const random = seededRandom(20261202);
const edgeValues = [0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1];
const alerts: Synthetic[] = Array.from({ length: 600 }, (_, i) => {
  // One in ten on an exact bin edge; the rest on two decimals, so scores tie often.
  const p = i % 10 === 0 ? edgeValues[i % edgeValues.length] : Math.round(random() * 100) / 100;
  const fraud = random() < p;
  const draw = random();
  const outcome = draw < 0.05 ? null : draw < 0.15 ? "inconclusive" : fraud ? "confirmed_fraud" : "legitimate";
  const labelDraw = random();
  const label = labelDraw < 0.08 ? "fraud" : labelDraw < 0.12 ? "genuine" : null;
  return { score: p, p, outcome, label };
});

function truthOf(alert: Synthetic): number | null {
  if (alert.label) return alert.label === "fraud" ? 1 : 0;
  if (alert.outcome === "confirmed_fraud") return 1;
  if (alert.outcome === "legitimate") return 0;
  return null;
}

// A second model version whose scores move: 600 on 07-04 (the reference), 600 higher ones on 07-05,
// and 499 on 07-06 — one too few for a day's own PSI. 1,099 scores in two days are enough for daily steps.
const drifting = {
  reference: Array.from({ length: 600 }, () => random()),
  shifted: Array.from({ length: 600 }, () => Math.sqrt(random())),
  short: Array.from({ length: 499 }, () => random()),
};
let driftingVersionId = "";

const closedWithTruth = alerts.filter((alert) => alert.outcome !== null && truthOf(alert) !== null);
const p = closedWithTruth.map((alert) => alert.p);
const y = closedWithTruth.map((alert) => truthOf(alert)!);

beforeAll(async () => {
  const version = await prisma.modelVersion.create({ data: { modelName: "mixed", version: "1", scoreKind: "probability", alertThreshold: 0 } });
  const rows = alerts.map((alert, i) => ({
    external_id: `x${i}`,
    received_at: new Date(Date.UTC(2026, 6, 6, 0, i)).toISOString(),
    score: alert.score,
    probability: alert.p,
    state: alert.outcome ? "closed" : "waiting",
    closed_at: alert.outcome ? new Date(Date.UTC(2026, 6, 6, 12, i)).toISOString() : null,
    final_outcome: alert.outcome,
  }));
  await prisma.$executeRaw`
    INSERT INTO alerts (external_id, content_hash, received_at, occurred_at, amount_minor, currency, channel, merchant_category_code,
                        merchant_country, entity_ref, model_version_id, score, probability, priority, state, closed_at, final_outcome)
    SELECT r.external_id, 'h', r.received_at, r.received_at, 100, 'EUR', 'atm', '6011', 'DE', 'tok', ${version.id}::uuid,
           r.score, r.probability, r.probability, r.state, r.closed_at, r.final_outcome
      FROM json_to_recordset(${JSON.stringify(rows)}::json)
           AS r(external_id text, received_at timestamptz, score float8, probability float8, state text, closed_at timestamptz, final_outcome text)`;
  const drift = await prisma.modelVersion.create({ data: { modelName: "mixed", version: "2", scoreKind: "probability", alertThreshold: 0 } });
  driftingVersionId = drift.id;
  const driftRows = [
    ...drifting.reference.map((score, i) => ({ score, received_at: new Date(Date.UTC(2026, 6, 4, 1, 0, i)).toISOString() })),
    ...drifting.shifted.map((score, i) => ({ score, received_at: new Date(Date.UTC(2026, 6, 5, 1, 0, i)).toISOString() })),
    ...drifting.short.map((score, i) => ({ score, received_at: new Date(Date.UTC(2026, 6, 6, 1, 0, i)).toISOString() })),
  ].map((row, i) => ({ ...row, external_id: `d${i}` }));
  await prisma.$executeRaw`
    INSERT INTO alerts (external_id, content_hash, received_at, occurred_at, amount_minor, currency, channel, merchant_category_code,
                        merchant_country, entity_ref, model_version_id, score, probability, priority)
    SELECT r.external_id, 'h', r.received_at, r.received_at, 100, 'EUR', 'atm', '6011', 'DE', 'tok', ${drift.id}::uuid, r.score, r.score, r.score
      FROM json_to_recordset(${JSON.stringify(driftRows)}::json) AS r(external_id text, received_at timestamptz, score float8)`;
  // An older, opposite label first: only the latest one counts.
  const labels = alerts.flatMap((alert, i) =>
    alert.label
      ? [
          { external_id: `x${i}`, label: alert.label === "fraud" ? "genuine" : "fraud", source: "customer_report", observed_at: "2026-07-10T00:00:00Z" },
          { external_id: `x${i}`, label: alert.label, source: "chargeback", observed_at: "2026-08-01T00:00:00Z" },
        ]
      : [],
  );
  await prisma.$executeRaw`
    INSERT INTO labels (alert_external_id, alert_id, label, source, observed_at)
    SELECT r.external_id, a.id, r.label, r.source, r.observed_at
      FROM json_to_recordset(${JSON.stringify(labels)}::json) AS r(external_id text, label text, source text, observed_at timestamptz)
      JOIN alerts a ON a.external_id = r.external_id`;
});

const query = () => parseModelVersionMetricsQuery(new URLSearchParams("window=day&date=2026-07-06"));
const firstVersion = async (cap?: number) =>
  (await getModelVersionMetrics(prisma, { query: query(), now, scoreSampleCap: cap })).modelVersions.find((m) => m.modelVersion.version === "1")!;

describe("SQL aggregation against lib/metrics on the same alerts", () => {
  it("gives the same realized precision, reliability table, Brier score and ECE", async () => {
    const metrics = await firstVersion();
    const closed = alerts.filter((alert) => alert.outcome !== null);
    expect(metrics.received).toBe(600);
    expect(metrics.closed).toBe(closed.length);
    expect(metrics.realizedPrecision).toEqual(
      realizedPrecision({
        confirmedFraud: y.filter((v) => v === 1).length,
        legitimate: y.filter((v) => v === 0).length,
        inconclusive: closed.length - closedWithTruth.length,
      }),
    );
    const table = reliabilityTable(p, y);
    expect(metrics.calibration.bins.map((bin) => bin.n)).toEqual(table.map((bin) => bin.n));
    metrics.calibration.bins.forEach((bin, i) => {
      expect(bin.lower).toBe(table[i].lower);
      expect(bin.upper).toBe(table[i].upper);
      if (table[i].n > 0) {
        expect(bin.meanPredicted).toBeCloseTo(table[i].meanPredicted!, 12);
        expect(bin.observedRate).toBeCloseTo(table[i].observedRate!, 12);
      }
    });
    expect(metrics.calibration.brierScore).toBeCloseTo(brierScore(p, y)!, 12);
    expect(metrics.calibration.expectedCalibrationError).toBeCloseTo(expectedCalibrationError(p, y)!, 12);
  });

  it("gives the same ROC AUC and average precision when every score fits in the list", async () => {
    const metrics = await firstVersion();
    expect(metrics.discrimination.sample).toEqual({ used: p.length, total: p.length, sampled: false });
    expect(metrics.discrimination.rocAuc).toBeCloseTo(rocAuc(p, y)!, 12);
    expect(metrics.discrimination.averagePrecision).toBeCloseTo(averagePrecision(p, y)!, 12);
  });

  it("samples a longer list, says so, and draws the same sample every time", async () => {
    const first = await firstVersion(100);
    const again = await firstVersion(100);
    // A Bernoulli sample of rate 100 / n: about 100 alerts (standard deviation below 9 here).
    expect(first.discrimination.sample).toMatchObject({ total: p.length, sampled: true });
    expect(first.discrimination.sample.used).toBeGreaterThan(70);
    expect(first.discrimination.sample.used).toBeLessThan(130);
    expect(first.discrimination.positives + first.discrimination.negatives).toBe(first.discrimination.sample.used);
    expect(again.discrimination).toEqual(first.discrimination);
    // A sample of 100 still ranks like the whole: within a loose band of the full AUC.
    expect(Math.abs(first.discrimination.rocAuc! - rocAuc(p, y)!)).toBeLessThan(0.1);
  });

  it("samples across days exactly the alerts whose key falls below the cut, the rule worked out alert by alert", async () => {
    // The summaries keep each day's scores in key order and slice the prefix below 2^20 · cap / total
    // by binary search; here the same rule is applied to every alert on its own (its key computed
    // from its id in SQL), over the two days of the current drift window.
    const cap = 300;
    const answer = await getModelVersionMetrics(prisma, {
      query: parseModelVersionMetricsQuery(new URLSearchParams(`window=day&date=2026-07-06&driftCurrentDays=2&driftReferenceDays=2&modelVersionId=${driftingVersionId}`)),
      now,
      scoreSampleCap: cap,
    });
    const keyedScores = (from: string, to: string) => prisma.$queryRaw<{ score: number; key: number }[]>`
      SELECT score, (hashtextextended(id::text, 0) & 1048575)::int AS key FROM alerts
       WHERE model_version_id = ${driftingVersionId}::uuid AND received_at >= ${from}::timestamptz AND received_at < ${to}::timestamptz`;
    const sample = (rows: { score: number; key: number }[]) => rows.filter((row) => row.key < (1048576 * cap) / rows.length).map((row) => row.score);
    const current = await keyedScores("2026-07-05T00:00:00Z", "2026-07-07T00:00:00Z");
    const reference = await keyedScores("2026-07-03T00:00:00Z", "2026-07-05T00:00:00Z");
    expect([current.length, reference.length]).toEqual([1099, 600]);
    const { drift } = answer.modelVersions[0];
    expect(drift.current.sample).toEqual({ used: sample(current).length, total: 1099, sampled: true });
    expect(drift.reference.sample).toEqual({ used: sample(reference).length, total: 600, sampled: true });
    expect(drift.psi).toBeCloseTo(populationStabilityIndex(sample(reference), sample(current)).psi, 12);
  });

  it("gives the same PSI as lib/metrics on the same scores, overall and per day, and none for a day with too few scores", async () => {
    const answer = await getModelVersionMetrics(prisma, {
      query: parseModelVersionMetricsQuery(new URLSearchParams(`window=day&date=2026-07-06&driftCurrentDays=2&driftReferenceDays=2&modelVersionId=${driftingVersionId}`)),
      now,
    });
    const { drift } = answer.modelVersions[0];
    // Current = 07-05 and 07-06 (600 + 499 scores), reference = 07-03 and 07-04 (600).
    expect(drift.reference.sample).toEqual({ used: 600, total: 600, sampled: false });
    expect(drift.current.sample).toEqual({ used: 1099, total: 1099, sampled: false });
    const overall = populationStabilityIndex(drifting.reference, [...drifting.shifted, ...drifting.short]);
    expect(drift.psi).toBeCloseTo(overall.psi, 12);
    expect(drift.level).toBe(overall.level);
    expect(drift.bins.map((bin) => bin.actualShare)).toEqual(overall.bins.map((bin) => bin.actualShare));
    expect(drift.step).toBe("day");
    expect(drift.series.map((day) => day.scores)).toEqual([600, 499]);
    expect(drift.series[0].psi).toBeCloseTo(populationStabilityIndex(drifting.reference, drifting.shifted).psi, 12);
    expect(drift.series[1].psi).toBeNull();
  });
});
