// How each reviewer's decisions hold up (DESIGN.md §4 Feedback-loop metrics): the numbers of the
// Reviewer quality screen and of GET /api/v1/metrics/reviewers.
//
// A reviewer's work in a window is their first reviews (review_round 1) closed in it. Everything is
// counted in PostgreSQL with GROUPING SETS, so one query gives each reviewer's row and the team's;
// the second-review pairs for Cohen's kappa come back as a 3×3 table of counts per reviewer.
//
// Who stands out: a reviewer whose whole 95% Wilson interval lies above or below the team's rate.
// Comparing intervals with the team rather than point values keeps a reviewer with five alerts from
// standing out on chance alone. The team rate includes the reviewer, which makes the test a little
// conservative for someone who does a large share of the work.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { Prisma } from "@/lib/generated/prisma/client";
import { getSettings } from "@/lib/settings/get-settings";
import { cohenKappa, falseClearRate, observedOverExpected, rate, realizedPrecision } from "@/lib/metrics";
import { standsOut } from "@/lib/feedback/stands-out";
import { latestExternalLabels } from "@/lib/feedback/ground-truth-sql";
import { resolveMetricsWindow, windowJson } from "@/lib/feedback/metrics-window";
import type { ReviewerMetrics, ReviewerMetricsAnswer, ReviewerNumbers, WindowQuery } from "@/lib/feedback/schemas";

type OutcomeName = (typeof OUTCOME_CATEGORIES)[number];

export interface GetReviewerMetricsOptions {
  query: WindowQuery;
  now: Date;
}

const OUTCOME_CATEGORIES = ["confirmed_fraud", "legitimate", "inconclusive"] as const;

interface FirstReviewRow {
  /** NULL on the team row of the grouping sets. */
  reviewerId: string | null;
  pseudonym: string | null;
  displayName: string | null;
  closed: number;
  fraud: number;
  legitimate: number;
  inconclusive: number;
  withProbability: number;
  fraudWithProbability: number;
  expectedFraud: number | null;
  calibrated: number;
  falseClears: number;
  medianHandlingSeconds: number | null;
}

interface PairRow {
  reviewerId: string | null;
  first: OutcomeName;
  second: OutcomeName;
  n: number;
}

interface SecondReviewRow {
  reviewerId: string;
  n: number;
}

function numbersOf(row: FirstReviewRow | undefined, pairs: PairRow[], secondReviews: number): ReviewerNumbers {
  const expanded: [string, string][] = [];
  let agreements = 0;
  for (const pair of pairs) {
    for (let i = 0; i < pair.n; i++) expanded.push([pair.first, pair.second]);
    if (pair.first === pair.second) agreements += pair.n;
  }
  const legitimate = row?.legitimate ?? 0;
  return {
    closed: row?.closed ?? 0,
    outcomeMix: { confirmedFraud: row?.fraud ?? 0, legitimate, inconclusive: row?.inconclusive ?? 0 },
    hitRate: realizedPrecision({ confirmedFraud: row?.fraud ?? 0, legitimate, inconclusive: row?.inconclusive ?? 0 }),
    observedOverExpected: {
      value: observedOverExpected({ observedFraud: row?.fraudWithProbability ?? 0, expectedFraud: row?.expectedFraud ?? 0 }),
      observedFraud: row?.fraudWithProbability ?? 0,
      expectedFraud: row?.expectedFraud ?? 0,
      alertsWithProbability: row?.withProbability ?? 0,
      calibratedAlerts: row?.calibrated ?? 0,
    },
    falseClearRate: falseClearRate({ falseClears: row?.falseClears ?? 0, clearedLegitimate: legitimate }),
    medianHandlingSeconds: row?.medianHandlingSeconds ?? null,
    agreement: {
      kappa: cohenKappa(expanded, OUTCOME_CATEGORIES),
      agreementRate: rate(agreements, expanded.length),
      pairs: pairs
        .map(({ first, second, n }) => ({ first, second, n }))
        .sort((a, b) => OUTCOME_CATEGORIES.indexOf(a.first) - OUTCOME_CATEGORIES.indexOf(b.first) || OUTCOME_CATEGORIES.indexOf(a.second) - OUTCOME_CATEGORIES.indexOf(b.second)),
    },
    secondReviews,
  };
}

export async function getReviewerMetrics(db: DbOrTx, options: GetReviewerMetricsOptions): Promise<ReviewerMetricsAnswer> {
  const { query, now } = options;
  const settings = await getSettings(db);
  const window = resolveMetricsWindow(query, { now, labelMaturityDays: settings.metrics.labelMaturityDays });

  // One statement: the window's first reviews are read once, the latest external label is looked up
  // only for those cleared `legitimate` (the only ones a label can make a false clear), and names are
  // joined after aggregating.
  const [{ firstReviews, pairs, secondReviews }] = await db.$queryRaw<[{ firstReviews: FirstReviewRow[]; pairs: PairRow[]; secondReviews: SecondReviewRow[] }]>(Prisma.sql`
    WITH first AS MATERIALIZED (
      -- Each outcome's alert by its primary key. LIMIT 1 keeps the lookup per row: as a plain join
      -- the planner hashed the whole alerts table (a sequential read of 1,000,000 rows, half the
      -- statement, npm run bench -- --scale 1000000 --explain) to meet 74,000 outcomes.
      SELECT o.reviewer_id, o.alert_id, o.outcome, o.handling_seconds, a.probability, a.calibrated
        FROM outcomes o
       CROSS JOIN LATERAL (SELECT x.probability, x.calibrated FROM alerts x WHERE x.id = o.alert_id LIMIT 1) a
       WHERE o.review_round = 1 AND o.closed_at >= ${window.from} AND o.closed_at < ${window.to}
    ),
    ext AS (${latestExternalLabels(Prisma.sql`SELECT alert_id FROM first WHERE outcome = 'legitimate'`)}),
    per_reviewer AS (
      SELECT f.reviewer_id,
             count(*) AS closed,
             count(*) FILTER (WHERE f.outcome = 'confirmed_fraud') AS fraud,
             count(*) FILTER (WHERE f.outcome = 'legitimate') AS legitimate,
             count(*) FILTER (WHERE f.outcome = 'inconclusive') AS inconclusive,
             count(f.probability) AS "withProbability",
             count(f.probability) FILTER (WHERE f.outcome = 'confirmed_fraud') AS "fraudWithProbability",
             sum(f.probability) AS "expectedFraud",
             count(f.probability) FILTER (WHERE f.calibrated) AS calibrated,
             count(*) FILTER (WHERE f.outcome = 'legitimate' AND ext.label = 'fraud') AS "falseClears",
             percentile_cont(0.5) WITHIN GROUP (ORDER BY f.handling_seconds) AS "medianHandlingSeconds"
        FROM first f
        LEFT JOIN ext ON ext.alert_id = f.alert_id
       GROUP BY GROUPING SETS ((f.reviewer_id), ())
    ),
    first_reviews AS (
      SELECT r.reviewer_id AS "reviewerId", u.pseudonym, u.display_name AS "displayName", r.closed, r.fraud, r.legitimate,
             r.inconclusive, r."withProbability", r."fraudWithProbability", r."expectedFraud", r.calibrated, r."falseClears",
             r."medianHandlingSeconds"
        FROM per_reviewer r LEFT JOIN users u ON u.id = r.reviewer_id
    ),
    pairs AS (
      SELECT CASE WHEN GROUPING(f.reviewer_id) = 0 THEN f.reviewer_id END AS "reviewerId",
             f.outcome AS first, s.outcome AS second, count(*) AS n
        FROM first f
        JOIN outcomes s ON s.alert_id = f.alert_id AND s.review_round = 2
       GROUP BY GROUPING SETS ((f.reviewer_id, f.outcome, s.outcome), (f.outcome, s.outcome))
    ),
    second_reviews AS (
      SELECT o.reviewer_id AS "reviewerId", count(*) AS n
        FROM outcomes o
       WHERE o.review_round = 2 AND o.closed_at >= ${window.from} AND o.closed_at < ${window.to}
       GROUP BY 1
    )
    SELECT (SELECT coalesce(json_agg(first_reviews), '[]') FROM first_reviews) AS "firstReviews",
           (SELECT coalesce(json_agg(pairs), '[]') FROM pairs) AS pairs,
           (SELECT coalesce(json_agg(second_reviews), '[]') FROM second_reviews) AS "secondReviews"`);

  const teamRow = firstReviews.find((row) => row.reviewerId === null);
  const team = numbersOf(
    teamRow,
    pairs.filter((pair) => pair.reviewerId === null),
    secondReviews.reduce((sum, row) => sum + row.n, 0),
  );

  const reviewers: ReviewerMetrics[] = firstReviews
    .filter((row) => row.reviewerId !== null)
    .map((row) => {
      const numbers = numbersOf(
        row,
        pairs.filter((pair) => pair.reviewerId === row.reviewerId),
        secondReviews.find((second) => second.reviewerId === row.reviewerId)?.n ?? 0,
      );
      return {
        reviewer: { id: row.reviewerId!, pseudonym: row.pseudonym!, displayName: row.displayName },
        ...numbers,
        standsOut: {
          hitRate: standsOut(numbers.hitRate, team.hitRate),
          falseClearRate: standsOut(numbers.falseClearRate, team.falseClearRate),
          agreementRate: standsOut(numbers.agreement.agreementRate, team.agreement.agreementRate),
        },
      };
    })
    .sort((a, b) => (a.reviewer.displayName ?? "").localeCompare(b.reviewer.displayName ?? "") || a.reviewer.id.localeCompare(b.reviewer.id));

  return { window: windowJson(window), generatedAt: now.toISOString(), team, reviewers };
}
