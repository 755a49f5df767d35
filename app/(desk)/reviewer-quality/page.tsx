import type { Metadata } from "next";
import Link from "next/link";
import type { ReactNode } from "react";
import { db } from "@/lib/db/client";
import { requirePagePermission } from "@/lib/auth/current-user";
import { isAppError, type FieldIssue } from "@/lib/errors";
import { getSettings } from "@/lib/settings/get-settings";
import { getReviewerMetrics } from "@/lib/feedback/get-reviewer-metrics";
import { formWindowInput, parseWindowQuery, windowQueryEntries } from "@/lib/feedback/parse-metrics-query";
import type { ReviewerMetricsAnswer, ReviewerNumbers, WindowQuery } from "@/lib/feedback/schemas";
import type { Rate } from "@/lib/metrics";
import { NotAllowed } from "@/app/components/not-allowed";
import { formValues, MetricsWindowForm, WindowSummary } from "@/app/components/metrics-window-form";
import { IntervalForestChart } from "@/app/components/charts/interval-forest-chart";
import { formatCount, formatCounts, formatDecimal, formatInterval, formatPercent, formatSeconds } from "@/app/components/metric-format";

export const metadata: Metadata = { title: "Reviewer quality" };
export const dynamic = "force-dynamic";

type SearchParams = Record<string, string | string[] | undefined>;
type Side = "above" | "below" | null;

/** A rate with its interval and counts; a reviewer beyond the team says so in words, not colour alone. */
function RateCell({ rate, side, higherIs }: { rate: Rate; side?: Side; higherIs: "good" | "bad" | "neutral" }) {
  const flagged = side !== undefined && side !== null;
  const worse = flagged && higherIs !== "neutral" && (side === "above") === (higherIs === "bad");
  return (
    <td className={`num ${flagged ? (worse ? "bg-overdue-wash" : "bg-attention-wash") : ""}`}>
      <span className="font-semibold">{formatPercent(rate.value)}</span>
      <span className="block text-2xs text-ink-soft">
        {formatInterval(rate)} · {formatCounts(rate)}
      </span>
      {flagged ? <span className={`block text-2xs font-semibold ${worse ? "text-overdue" : "text-attention"}`}>{side} the team</span> : null}
    </td>
  );
}

function NumberCells({ row, standsOut }: { row: ReviewerNumbers; standsOut?: { hitRate: Side; falseClearRate: Side; agreementRate: Side } }) {
  const oe = row.observedOverExpected;
  return (
    <>
      <td className="num">{formatCount(row.closed)}</td>
      <td className="num">
        {formatCount(row.outcomeMix.confirmedFraud)} / {formatCount(row.outcomeMix.legitimate)} / {formatCount(row.outcomeMix.inconclusive)}
      </td>
      <RateCell rate={row.hitRate} side={standsOut?.hitRate} higherIs="neutral" />
      <td className="num">
        <span className="font-semibold">{formatDecimal(oe.value, 2)}</span>
        <span className="block text-2xs text-ink-soft">
          {formatCount(oe.observedFraud)} found ÷ {oe.expectedFraud.toFixed(1)} expected
        </span>
      </td>
      <RateCell rate={row.falseClearRate} side={standsOut?.falseClearRate} higherIs="bad" />
      <td className="num">{formatSeconds(row.medianHandlingSeconds)}</td>
      <td className="num">
        <span className="font-semibold">{formatDecimal(row.agreement.kappa, 2)}</span>
        <span className="block text-2xs text-ink-soft">
          agreed {formatCounts(row.agreement.agreementRate)}
          {standsOut?.agreementRate ? `, ${standsOut.agreementRate} the team` : ""}
        </span>
        <span className="block text-2xs text-ink-soft">did {formatCount(row.secondReviews)} second reviews</span>
      </td>
    </>
  );
}

function Definition({ term, children }: { term: string; children: ReactNode }) {
  return (
    <div>
      <dt className="font-semibold text-ink">{term}</dt>
      <dd>{children}</dd>
    </div>
  );
}

export default async function ReviewerQualityPage({ searchParams }: { searchParams: Promise<SearchParams> }) {
  const access = await requirePagePermission("reviewer_quality.view");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const raw = await searchParams;
  const now = new Date();
  const settings = await getSettings(db());

  let query: WindowQuery | null = null;
  let issues: FieldIssue[] = [];
  let answer: ReviewerMetricsAnswer | null = null;
  try {
    query = parseWindowQuery(formWindowInput(raw));
    answer = await getReviewerMetrics(db(), { query, now });
  } catch (error) {
    if (!isAppError(error)) throw error;
    issues = error.issues;
  }
  const apiQuery = new URLSearchParams(query ? windowQueryEntries(query) : []).toString();
  // With the four-eyes rule only one kind of first outcome goes to a second person; kappa is then 0
  // by construction (observed agreement equals chance agreement) and the agreement share is what to read.
  const teamFirstOutcomes = new Set(answer?.team.agreement.pairs.map((pair) => pair.first) ?? []);
  const labels = new Map(answer?.reviewers.map((row) => [row.reviewer.id, row.reviewer.displayName ?? row.reviewer.pseudonym]) ?? []);

  return (
    <section aria-labelledby="reviewer-quality-heading" className="space-y-4">
      <div className="space-y-1">
        <h1 id="reviewer-quality-heading" className="text-lg font-semibold">
          Reviewer quality
        </h1>
        <p className="max-w-3xl text-sm text-ink-soft">
          How each reviewer&apos;s first reviews held up against late labels and second opinions. A reviewer is marked only when the whole 95%
          interval of their rate lies above or below the team&apos;s, so a handful of alerts cannot make anyone stand out. These numbers start
          a conversation; they do not settle one.
        </p>
      </div>

      <MetricsWindowForm action="/reviewer-quality" label="Window" values={formValues(raw)} issues={issues} now={now} labelMaturityDays={settings.metrics.labelMaturityDays} showBucket={false} />

      {answer ? (
        <>
          <WindowSummary window={answer.window} what="First reviews closed" />
          {answer.reviewers.length === 0 ? (
            <p className="text-sm text-ink-soft">Nobody closed a first review in this window.</p>
          ) : (
            <div className="panel overflow-x-auto">
              <table className="data-table" aria-label="Reviewers over the window, with the team in the last row">
                <thead>
                  <tr>
                    <th scope="col">Reviewer</th>
                    <th scope="col" className="num">
                      Closed
                    </th>
                    <th scope="col" className="num">
                      Fraud / legit. / inconcl.
                    </th>
                    <th scope="col" className="num">
                      Hit rate
                    </th>
                    <th scope="col" className="num">
                      Observed ÷ expected
                    </th>
                    <th scope="col" className="num">
                      False-clear rate
                    </th>
                    <th scope="col" className="num">
                      Median handling
                    </th>
                    <th scope="col" className="num">
                      Kappa with 2nd review
                    </th>
                  </tr>
                </thead>
                <tbody>
                  {answer.reviewers.map((row) => (
                    <tr key={row.reviewer.id}>
                      <th scope="row" className="font-normal text-ink">
                        {row.reviewer.displayName ?? row.reviewer.pseudonym}
                        <span className="block font-mono text-2xs text-ink-soft">{row.reviewer.pseudonym}</span>
                      </th>
                      <NumberCells row={row} standsOut={row.standsOut} />
                    </tr>
                  ))}
                </tbody>
                <tfoot>
                  <tr className="font-semibold">
                    <th scope="row" className="text-ink">
                      Team
                    </th>
                    <NumberCells row={answer.team} />
                  </tr>
                </tfoot>
              </table>
            </div>
          )}

          {teamFirstOutcomes.size === 1 ? (
            <p className="text-xs text-ink-soft">
              Every second review in this window followed a first outcome of &ldquo;{[...teamFirstOutcomes][0].replace("_", " ")}&rdquo; (the four-eyes rule sends
              only those to a second person), so chance agreement equals observed agreement and kappa is 0 by construction. Read the
              agreement share beside it instead.
            </p>
          ) : null}

          {answer.reviewers.length > 0 ? (
            <div className="grid gap-4 lg:grid-cols-2">
              <div className="panel p-3">
                <IntervalForestChart
                  rows={answer.reviewers.map((row) => ({ key: row.reviewer.id, label: labels.get(row.reviewer.id)!, rate: row.hitRate, standsOut: row.standsOut.hitRate }))}
                  team={answer.team.hitRate}
                  xLabel="hit rate: fraud ÷ (fraud + legitimate) of first reviews"
                  title="Hit rate by reviewer"
                  caption="A reviewer differs from the team only where the whole bar is off the dashed team line; long bars are small samples, not bad work."
                />
              </div>
              <div className="panel p-3">
                <IntervalForestChart
                  rows={answer.reviewers.map((row) => ({ key: row.reviewer.id, label: labels.get(row.reviewer.id)!, rate: row.falseClearRate, standsOut: row.standsOut.falseClearRate }))}
                  team={answer.team.falseClearRate}
                  xLabel="false-clear rate: cleared, then a fraud chargeback or report"
                  title="False-clear rate by reviewer"
                  caption="Bars entirely right of the team line mark someone whose cleared alerts came back as fraud more often than the team's; immature windows undercount."
                />
              </div>
            </div>
          ) : null}

          <details className="panel p-3 text-xs text-ink-soft">
            <summary className="cursor-pointer font-semibold text-ink">What each column means</summary>
            <dl className="mt-2 grid max-w-4xl gap-2">
              <Definition term="Closed">First reviews (round 1) the person closed in the window; second reviews are counted apart.</Definition>
              <Definition term="Hit rate">
                Confirmed fraud ÷ (confirmed fraud + legitimate) of their own first-review outcomes, with the 95% Wilson score interval
                (Wilson 1927). Inconclusive outcomes are left out and shown in the mix.
              </Definition>
              <Definition term="Observed ÷ expected">
                Fraud they confirmed ÷ the sum of the alerts&apos; probabilities p. 1.00 means as much fraud as the model predicted for the
                alerts they got, so a reviewer handed riskier alerts is not ranked higher for that alone. Where a model version is not
                calibrated yet, p is its corrected score or prior.
              </Definition>
              <Definition term="False-clear rate">
                Of the alerts they closed legitimate, the share whose latest chargeback or customer report says fraud. Disputes arrive for up
                to {settings.metrics.labelMaturityDays} days, so recent windows show too few.
              </Definition>
              <Definition term="Median handling">Claim to close of their first reviews, the median (PostgreSQL percentile_cont).</Definition>
              <Definition term="Kappa with 2nd review">
                Cohen&apos;s kappa (Cohen 1960) between their first outcome and the second reviewer&apos;s on the same alerts: agreement beyond
                chance; empty when there are no pairs or both always chose the same outcome. Below it: how often the two outcomes matched, and
                how many second reviews the person did on others&apos; alerts.
              </Definition>
            </dl>
          </details>
          <p className="text-xs text-ink-soft">
            The same numbers as JSON (API tokens receive pseudonyms, not names):{" "}
            <Link href={`/api/v1/metrics/reviewers${apiQuery ? `?${apiQuery}` : ""}`} className="font-mono text-accent underline">
              GET /api/v1/metrics/reviewers{apiQuery ? `?${apiQuery}` : ""}
            </Link>
          </p>
        </>
      ) : null}
    </section>
  );
}
