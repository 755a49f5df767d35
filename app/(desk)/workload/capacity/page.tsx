import type { Metadata } from "next";
import { Fragment } from "react";
import Link from "next/link";
import { db } from "@/lib/db/client";
import { requirePagePermission } from "@/lib/auth/current-user";
import { isAppError, type FieldIssue } from "@/lib/errors";
import { planCapacity } from "@/lib/workload/plan-capacity";
import { parseCapacityQuery } from "@/lib/workload/parse-workload-query";
import { capacityQuerySchema, type ModelVersionCapacity } from "@/lib/workload/schemas";
import { NotAllowed } from "@/app/components/not-allowed";
import { formatMoney, formatProbability, formatUtc } from "@/app/components/format";
import { CapacityChart } from "@/app/components/charts/capacity-chart";

export const metadata: Metadata = { title: "Capacity planner" };
export const dynamic = "force-dynamic";

type SearchParams = Record<string, string | string[] | undefined>;

const perDay = (value: number) => `${new Intl.NumberFormat("en", { maximumFractionDigits: value < 10 ? 1 : 0 }).format(value)} / day`;

function scoreText(value: number | null, kind: ModelVersionCapacity["scoreKind"]): string {
  if (value === null) return "—";
  return kind === "probability" ? value.toFixed(3) : value.toPrecision(4);
}

const calibrationWords: Record<ModelVersionCapacity["calibration"]["source"], string> = {
  calibration_map: "calibration map",
  corrected_score: "score corrected for undersampling (not calibrated yet)",
  prior_hit_rate: "prior hit rate only (not calibrated yet)",
};

/** What the reader must know before trusting a version's threshold row. */
function thresholdNotes(version: ModelVersionCapacity): { text: string; warn: boolean }[] {
  const notes: { text: string; warn: boolean }[] = [];
  const traffic = perDay(version.observed.trafficPerDay);
  if (version.threshold.capacityExceedsPool) {
    notes.push({ text: `K exceeds all traffic seen (${traffic}): any threshold at or below the lowest score seen alerts on all of it.`, warn: false });
    if (version.observed.belowTheLineSamples === 0) notes.push({ text: "No below-the-line samples: the traffic under the current threshold is unknown.", warn: false });
  }
  if (version.threshold.reachesBelowCurrentAlerts) {
    notes.push({ text: `The threshold is below the current one: the traffic there is estimated from ${version.observed.belowTheLineSamples} below-the-line samples.`, warn: false });
  }
  if (!version.threshold.inCalibratedRange) {
    notes.push({ text: "The threshold is below the lowest labelled score of the calibration map: the precision there is little more than a guess.", warn: true });
  }
  if (version.observed.currencies.length > 1) notes.push({ text: `Alerts in ${version.observed.currencies.join(", ")}: money is summed as one currency.`, warn: true });
  if (version.observed.withoutExposure > 0) notes.push({ text: `${version.observed.withoutExposure} alerts without an exposure are left out.`, warn: false });
  return notes;
}

export default async function CapacityPlannerPage({ searchParams }: { searchParams: Promise<SearchParams> }) {
  const access = await requirePagePermission("workload.view");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const raw = await searchParams;
  let issues: FieldIssue[] = [];
  let query = capacityQuerySchema.parse({});
  try {
    query = parseCapacityQuery(raw);
  } catch (error) {
    if (!isAppError(error)) throw error;
    issues = error.issues;
  }
  const now = new Date();
  const answer = await planCapacity(db(), { query, now });
  const money = (minor: number) => formatMoney(Math.round(minor), answer.homeCurrency);
  const first = (name: string) => {
    const value = raw[name];
    return (Array.isArray(value) ? value[0] : value) ?? "";
  };
  const K = answer.capacity.perDay;

  return (
    <section aria-labelledby="capacity-heading" className="space-y-5">
      <div className="space-y-1">
        <p className="text-sm">
          <Link href="/workload" className="text-accent underline">
            Workload
          </Link>{" "}
          /
        </p>
        <h1 id="capacity-heading" className="text-lg font-semibold">
          Capacity planner
        </h1>
        <p className="max-w-3xl text-sm text-ink-soft">
          What a daily review capacity buys, from each model version&apos;s last {answer.window.days} days of alerts and its calibration: the alert threshold
          that yields about K alerts a day, and how much expected loss the team reaches when the queue is worked by expected loss rather than by score.
          As of {formatUtc(now)}.
        </p>
      </div>

      <form method="get" action="/workload/capacity" className="panel flex flex-wrap items-end gap-3 p-3" aria-label="Daily capacity">
        <label className="flex flex-col gap-0.5 text-xs font-medium">
          Alerts a day (K)
          <input name="capacity" type="number" min={1} max={1_000_000} defaultValue={first("capacity")} placeholder={String(K)} className="field w-28" />
        </label>
        <span className="pb-1.5 text-xs text-ink-soft">or</span>
        <label className="flex flex-col gap-0.5 text-xs font-medium">
          Analysts
          <input name="analysts" type="number" min={1} max={10_000} defaultValue={first("analysts")} className="field w-20" />
        </label>
        <label className="flex flex-col gap-0.5 text-xs font-medium">
          Hours each
          <input name="hours" type="number" min={0.5} max={24} step={0.5} defaultValue={first("hours")} className="field w-20" />
        </label>
        <label className="flex flex-col gap-0.5 text-xs font-medium">
          Minutes an alert
          <input name="handlingMinutes" type="number" min={0.5} max={600} step={0.5} defaultValue={first("handlingMinutes")} placeholder="setting" className="field w-24" />
        </label>
        <label className="flex flex-col gap-0.5 text-xs font-medium">
          Days of traffic
          <input name="days" type="number" min={1} max={60} defaultValue={String(query.days)} className="field w-20" />
        </label>
        <button type="submit" className="btn btn-primary">
          Plan
        </button>
        <p className="w-full text-xs text-ink-soft">
          Planning for <strong className="text-ink">K = {K} alerts a day</strong>
          {answer.capacity.source === "given" && " (as given)."}
          {answer.capacity.source === "staffing" &&
            answer.capacity.staffing &&
            ` = ${answer.capacity.staffing.analysts} analysts × ${answer.capacity.staffing.hoursPerAnalyst} h × 60 ÷ ${answer.capacity.staffing.handlingMinutes} min an alert.`}
          {answer.capacity.source === "setting" && " (the daily capacity in Settings → metrics)."}
        </p>
      </form>
      {issues.length > 0 && (
        <p role="alert" className="rounded border border-overdue/40 bg-overdue-wash px-3 py-2 text-sm text-overdue">
          {issues.map((issue) => `${issue.path}: ${issue.message}`).join("; ")} — planning with the defaults instead.
        </p>
      )}

      <aside className="panel border-attention/40 bg-attention-wash p-3 text-xs" aria-labelledby="assumptions-heading">
        <h2 id="assumptions-heading" className="mb-1 text-sm font-semibold">
          Assumptions
        </h2>
        <ul className="list-disc space-y-0.5 pl-5">
          {answer.assumptions.map((assumption) => (
            <li key={assumption}>{assumption}</li>
          ))}
        </ul>
      </aside>

      {answer.modelVersions.length === 0 ? (
        <p className="text-sm text-ink-soft">No model version sent alerts in the last {answer.window.days} days.</p>
      ) : (
        <>
          <div className="panel overflow-x-auto">
            <table className="data-table">
              <caption className="px-2 pt-2 text-left text-sm font-semibold">Threshold for K = {K} alerts a day</caption>
              <thead>
                <tr>
                  <th>Model version</th>
                  <th>Probabilities from</th>
                  <th className="num">Alerts now</th>
                  <th className="num">Current threshold</th>
                  <th className="num">Threshold for K</th>
                  <th className="num">Alerts at it</th>
                  <th className="num">Expected precision</th>
                  <th className="num">Expected loss caught</th>
                </tr>
              </thead>
              <tbody>
                {answer.modelVersions.map((version) => {
                  const notes = thresholdNotes(version);
                  return (
                    <Fragment key={version.modelVersionId}>
                    <tr className="align-top">
                      <th scope="row" className="font-normal whitespace-nowrap">
                        {version.modelName} {version.version}
                        {!version.active && <span className="ml-1 text-xs text-ink-faint">(inactive)</span>}
                      </th>
                      <td className="text-xs">
                        {calibrationWords[version.calibration.source]}
                        {version.calibration.labelCount !== null && <span className="text-ink-soft"> · {version.calibration.labelCount} labels</span>}
                      </td>
                      <td className="num">{perDay(version.observed.alertsPerDay)}</td>
                      <td className="num">{scoreText(version.currentThreshold, version.scoreKind)}</td>
                      <td className="num font-semibold">
                        {version.threshold.capacityExceedsPool && version.threshold.threshold !== null && "≤ "}
                        {scoreText(version.threshold.threshold, version.scoreKind)}
                      </td>
                      <td className="num">{perDay(version.threshold.alertsPerDayAtThreshold)}</td>
                      <td className="num">{formatProbability(version.threshold.precision)}</td>
                      <td className="num">{money(version.threshold.expectedLossCaughtPerDayMinor)} / day</td>
                    </tr>
                    {notes.length > 0 && (
                      <tr>
                        <td colSpan={8} className="pt-0 text-xs text-ink-soft">
                          <ul className="list-disc space-y-0.5 pl-5">
                            {notes.map((note) => (
                              <li key={note.text} className={note.warn ? "text-attention" : undefined}>
                                {note.text}
                              </li>
                            ))}
                          </ul>
                        </td>
                      </tr>
                    )}
                    </Fragment>
                  );
                })}
              </tbody>
            </table>
          </div>

          <div className="panel overflow-x-auto">
            <table className="data-table">
              <caption className="px-2 pt-2 text-left text-sm font-semibold">
                Today&apos;s queue worked by score versus by expected loss, at K = {K} a day
              </caption>
              <thead>
                <tr>
                  <th>Model version</th>
                  <th className="num">Queue</th>
                  <th className="num">Reviewed</th>
                  <th className="num">By score: caught</th>
                  <th className="num">precision</th>
                  <th className="num">By expected loss: caught</th>
                  <th className="num">precision</th>
                  <th className="num">Gain of ordering by money</th>
                </tr>
              </thead>
              <tbody>
                {answer.modelVersions.map((version) => {
                  const gainShare = version.queueByScore.expectedLossCaughtPerDayMinor > 0 ? version.orderingGainPerDayMinor / version.queueByScore.expectedLossCaughtPerDayMinor : null;
                  return (
                    <tr key={version.modelVersionId}>
                      <th scope="row" className="font-normal whitespace-nowrap">
                        {version.modelName} {version.version}
                      </th>
                      <td className="num">{perDay(version.queuePerDay)}</td>
                      <td className="num">{perDay(version.queueByScore.reviewedPerDay)}</td>
                      <td className="num">{money(version.queueByScore.expectedLossCaughtPerDayMinor)}</td>
                      <td className="num">{formatProbability(version.queueByScore.precision)}</td>
                      <td className="num">{money(version.queueByExpectedLoss.expectedLossCaughtPerDayMinor)}</td>
                      <td className="num">{formatProbability(version.queueByExpectedLoss.precision)}</td>
                      <td className="num font-semibold">
                        {version.queueByScore.capacityExceedsPool ? (
                          <span className="font-normal text-ink-soft">none: every alert is reviewed</span>
                        ) : (
                          <>
                            +{money(version.orderingGainPerDayMinor)}
                            {gainShare !== null && <span className="font-normal text-ink-soft"> ({(gainShare * 100).toFixed(0)}%)</span>}
                          </>
                        )}
                      </td>
                    </tr>
                  );
                })}
              </tbody>
            </table>
            <p className="px-2 pb-2 text-xs text-ink-soft">
              Amounts are expected loss a day in the home currency ({answer.homeCurrency}). Ordering by expected loss reaches more money at stake with fewer
              confirmed frauds when large, less likely alerts outrank small, likely ones.
            </p>
          </div>

          <div className="grid gap-4 lg:grid-cols-2">
            {answer.modelVersions.map((version) => (
              <div key={version.modelVersionId} className="panel space-y-2 p-3">
                <h2 className="text-sm font-semibold">
                  {version.modelName} {version.version}: expected loss caught against capacity
                </h2>
                <CapacityChart curve={version.curve} capacityPerDay={K} queuePerDay={version.queuePerDay} currency={answer.homeCurrency} title={`${version.modelName} ${version.version}`} />
              </div>
            ))}
          </div>
        </>
      )}
    </section>
  );
}
