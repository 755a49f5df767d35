// How each reviewer's decisions hold up (DESIGN.md §4 Feedback-loop metrics): the numbers of the
// Reviewer quality screen and of GET /api/v1/metrics/reviewers.
//
// A reviewer's work in a window is their first reviews (review_round 1) closed in it. Everything is
// counted in PostgreSQL over daily summaries (one row per reviewer and UTC day, kept fresh by
// lib/feedback/refresh-daily-summaries.ts) with GROUPING SETS, so one query gives each reviewer's row
// and the team's; the second-review pairs for Cohen's kappa come back as a 3×3 table of counts per reviewer.
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
import { OUTCOME_ORDER, refreshReviewerDays } from "@/lib/feedback/refresh-daily-summaries";
import { resolveMetricsWindow, windowJson } from "@/lib/feedback/metrics-window";
import type { ReviewerMetrics, ReviewerMetricsAnswer, ReviewerNumbers, WindowQuery } from "@/lib/feedback/schemas";

type OutcomeName = (typeof OUTCOME_CATEGORIES)[number];

export interface GetReviewerMetricsOptions {
  query: WindowQuery;
  now: Date;
}

const OUTCOME_CATEGORIES = OUTCOME_ORDER;

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

  // Bring the reviewer days of the window up to date (lib/feedback/refresh-daily-summaries.ts), then
  // add them up, names joined after aggregating. The median handling time unnests the days' sorted
  // handling times; the agreement pairs are each day's 3 × 3 table in OUTCOME_ORDER, row-major.
  await refreshReviewerDays(db, { span: window });
  const fromDay = window.from.toISOString().slice(0, 10);
  const toDay = window.to.toISOString().slice(0, 10);
  const [{ firstReviews, pairs, secondReviews }] = await db.$queryRaw<[{ firstReviews: FirstReviewRow[]; pairs: PairRow[]; secondReviews: SecondReviewRow[] }]>(Prisma.sql`
    WITH d AS MATERIALIZED (
      SELECT * FROM reviewer_daily_summaries WHERE day >= ${fromDay}::date AND day < ${toDay}::date
    ),
    per_reviewer AS (
      SELECT d.reviewer_id,
             sum(d.closed) AS closed, sum(d.fraud) AS fraud, sum(d.legitimate) AS legitimate, sum(d.inconclusive) AS inconclusive,
             sum(d.with_probability) AS "withProbability", sum(d.fraud_with_probability) AS "fraudWithProbability",
             sum(d.expected_fraud) AS "expectedFraud", sum(d.calibrated) AS calibrated, sum(d.false_clears) AS "falseClears"
        FROM d
       GROUP BY GROUPING SETS ((d.reviewer_id), ())
      HAVING GROUPING(d.reviewer_id) = 1 OR sum(d.closed) > 0
    ),
    medians AS (
      SELECT d.reviewer_id, percentile_cont(0.5) WITHIN GROUP (ORDER BY h.seconds) AS seconds
        FROM d CROSS JOIN LATERAL unnest(d.handling_seconds) AS h(seconds)
       GROUP BY GROUPING SETS ((d.reviewer_id), ())
    ),
    first_reviews AS (
      SELECT r.reviewer_id AS "reviewerId", u.pseudonym, u.display_name AS "displayName", r.closed, r.fraud, r.legitimate,
             r.inconclusive, r."withProbability", r."fraudWithProbability", r."expectedFraud", r.calibrated, r."falseClears",
             m.seconds AS "medianHandlingSeconds"
        FROM per_reviewer r
        LEFT JOIN medians m ON m.reviewer_id IS NOT DISTINCT FROM r.reviewer_id
        LEFT JOIN users u ON u.id = r.reviewer_id
    ),
    pairs AS (
      SELECT CASE WHEN GROUPING(d.reviewer_id) = 0 THEN d.reviewer_id END AS "reviewerId",
             (${[...OUTCOME_ORDER]}::text[])[(c.cell - 1) / 3 + 1] AS first, (${[...OUTCOME_ORDER]}::text[])[(c.cell - 1) % 3 + 1] AS second,
             sum(c.n) AS n
        FROM d CROSS JOIN LATERAL unnest(d.agreement_pairs) WITH ORDINALITY AS c(n, cell)
       WHERE c.n > 0
       GROUP BY GROUPING SETS ((d.reviewer_id, c.cell), (c.cell))
    ),
    second_reviews AS (
      SELECT reviewer_id AS "reviewerId", sum(second_reviews) AS n FROM d GROUP BY 1 HAVING sum(second_reviews) > 0
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
