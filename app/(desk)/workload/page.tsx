import type { Metadata } from "next";
import Link from "next/link";
import { headers } from "next/headers";
import { db } from "@/lib/db/client";
import { requirePagePermission } from "@/lib/auth/current-user";
import { can } from "@/lib/auth/permissions";
import { isAppError, type FieldIssue } from "@/lib/errors";
import { requestContextOf } from "@/lib/http/request-context";
import { getWorkload } from "@/lib/workload/get-workload";
import { parseWorkloadQuery } from "@/lib/workload/parse-workload-query";
import { workloadQuerySchema, type BacklogCounts, type Money, type Workload } from "@/lib/workload/schemas";
import { NotAllowed } from "@/app/components/not-allowed";
import { formatDuration, formatMoney, formatUtc } from "@/app/components/format";
import { BacklogChart } from "@/app/components/charts/backlog-chart";
import { AgeChart } from "@/app/components/charts/age-chart";
import { ActionNotices, ReassignControl, ReleaseAllControl } from "@/app/(desk)/workload/analyst-actions";

export const metadata: Metadata = { title: "Workload" };
export const dynamic = "force-dynamic";

type SearchParams = Record<string, string | string[] | undefined>;

const HOUR_MS = 3_600_000;

function moneyList(list: Money[]): string {
  return list.length === 0 ? "—" : list.map((money) => formatMoney(money.minor, money.currency)).join(" + ");
}

function hours(value: number | null): string {
  if (value === null) return "—";
  return formatDuration(value * HOUR_MS);
}

function rate(perHour: number): string {
  return `${perHour.toFixed(perHour >= 10 ? 0 : 1)} / h`;
}

function Tile({ label, value, detail, tone = "plain" }: { label: string; value: string; detail: string; tone?: "plain" | "attention" | "overdue" }) {
  const colour = tone === "overdue" ? "text-overdue" : tone === "attention" ? "text-attention" : "text-ink";
  return (
    <div className="panel flex flex-col gap-0.5 p-3">
      <dt className="text-xs font-semibold text-ink-soft">{label}</dt>
      <dd className={`text-2xl font-semibold tabular-nums ${colour}`}>{value}</dd>
      <dd className="text-xs text-ink-soft">{detail}</dd>
    </div>
  );
}

function BacklogCells({ row }: { row: BacklogCounts }) {
  return (
    <>
      <td className="num">{row.open}</td>
      <td className="num">{row.waiting}</td>
      <td className="num">{row.inReview}</td>
      <td className="num">{row.secondReview}</td>
      <td className={`num ${row.overdue > 0 ? "font-semibold text-overdue" : ""}`}>{row.overdue}</td>
      <td className="num">{moneyList(row.expectedLoss)}</td>
    </>
  );
}

const backlogHeads = (
  <>
    <th className="num">Open</th>
    <th className="num">Waiting</th>
    <th className="num">In review</th>
    <th className="num">
      <abbr title="waiting for a second review" className="no-underline">2nd review</abbr>
    </th>
    <th className="num">Overdue</th>
    <th className="num">Expected loss</th>
  </>
);

export default async function WorkloadPage({ searchParams }: { searchParams: Promise<SearchParams> }) {
  const access = await requirePagePermission("workload.view");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const raw = await searchParams;
  let issues: FieldIssue[] = [];
  let query = workloadQuerySchema.parse({});
  try {
    query = parseWorkloadQuery(raw);
  } catch (error) {
    if (!isAppError(error)) throw error;
    issues = error.issues;
  }
  const now = new Date();
  const context = requestContextOf(await headers());
  const workload: Workload = await getWorkload(db(), { now, horizonHours: query.horizonHours, days: query.days, context: { requestId: context.requestId, ipAddress: context.ipAddress } });
  const canManage = can(access.user.role, "workload.manage");
  const homeCurrency = workload.homeCurrency;
  const { totals, team, parameters } = workload;

  return (
    <section aria-labelledby="workload-heading" className="space-y-5">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <div className="space-y-1">
          <h1 id="workload-heading" className="text-lg font-semibold">
            Workload
          </h1>
          <p className="text-sm text-ink-soft">
            The desk at {formatUtc(now)}: what is open, what is late or will be, and who is working on what.{" "}
            <Link href="/workload/capacity" className="text-accent underline">
              Capacity planner
            </Link>
          </p>
        </div>
        <form method="get" action="/workload" className="flex flex-wrap items-end gap-2" aria-label="Workload settings">
          <label className="flex flex-col gap-0.5 text-xs font-medium">
            Overdue within (hours)
            <input name="horizonHours" type="number" min={1} max={48} defaultValue={String(query.horizonHours)} className="field w-24" />
          </label>
          <label className="flex flex-col gap-0.5 text-xs font-medium">
            History (days)
            <input name="days" type="number" min={7} max={60} defaultValue={String(query.days)} className="field w-24" />
          </label>
          <button type="submit" className="btn">
            Show
          </button>
        </form>
      </div>
      {issues.length > 0 && (
        <p role="alert" className="rounded border border-overdue/40 bg-overdue-wash px-3 py-2 text-sm text-overdue">
          {issues.map((issue) => `${issue.path}: ${issue.message}`).join("; ")} — showing the defaults instead.
        </p>
      )}

      <dl className="grid grid-cols-2 gap-3 md:grid-cols-5">
        <Tile label="Waiting" value={String(totals.waiting)} detail={`of ${totals.open} open · ${totals.inReview} in review · ${totals.secondReview} second review`} />
        <Tile label="Overdue now" value={String(totals.overdue)} tone={totals.overdue > 0 ? "overdue" : "plain"} detail={`${totals.overdueWaiting} of them waiting`} />
        <Tile
          label={`Overdue in the next ${parameters.horizonHours} h`}
          value={String(totals.projectedOverdue)}
          tone={totals.projectedOverdue > 0 ? "attention" : "plain"}
          detail={`at the team's ${rate(team.closingRatePerHour)}, due order`}
        />
        <Tile label="Expected loss waiting" value={moneyList(totals.expectedLossWaiting)} detail={`${moneyList(totals.expectedLoss)} open in all`} />
        <Tile
          label="Time to clear"
          value={team.timeToClearHours === null ? "—" : hours(team.timeToClearHours)}
          tone={team.timeToClearHours === null && totals.open > 0 ? "attention" : "plain"}
          detail={
            team.analystsOnShift === 0
              ? `nobody claimed or closed an alert in the last ${parameters.onShiftHours} h`
              : team.closingRatePerHour === 0
                ? `${team.analystsOnShift} on shift, none closed an alert in the last ${parameters.rateWindowHours} h`
                : `${team.analystsOnShift} on shift at ${rate(team.closingRatePerHour)} · ${team.closedToday} closed today`
          }
        />
      </dl>

      <div className="grid gap-4 xl:grid-cols-2">
        <div className="panel overflow-x-auto">
          <table className="data-table">
            <caption className="px-2 pt-2 text-left text-sm font-semibold">Open alerts by age</caption>
            <thead>
              <tr>
                <th>Age</th>
                {backlogHeads}
              </tr>
            </thead>
            <tbody>
              {workload.byAge.map((row) => (
                <tr key={row.band.label}>
                  <th scope="row" className="font-normal">
                    {row.band.label}
                  </th>
                  <BacklogCells row={row} />
                </tr>
              ))}
            </tbody>
          </table>
        </div>
        <div className="panel overflow-x-auto">
          <table className="data-table">
            <caption className="px-2 pt-2 text-left text-sm font-semibold">Open alerts by expected loss (SLA band)</caption>
            <thead>
              <tr>
                <th>Expected loss</th>
                <th className="num">SLA</th>
                {backlogHeads}
              </tr>
            </thead>
            <tbody>
              {workload.byExpectedLoss.map((row) => (
                <tr key={String(row.band.minExpectedLossMinor)}>
                  <th scope="row" className="font-normal whitespace-nowrap">
                    {row.band.minExpectedLossMinor === null
                      ? "not priced yet"
                      : row.band.maxExpectedLossMinor === null
                        ? `${formatMoney(row.band.minExpectedLossMinor, homeCurrency)} or more`
                        : row.band.minExpectedLossMinor === 0
                          ? `under ${formatMoney(row.band.maxExpectedLossMinor, homeCurrency)}`
                          : `${formatMoney(row.band.minExpectedLossMinor, homeCurrency)} to under ${formatMoney(row.band.maxExpectedLossMinor, homeCurrency)}`}
                  </th>
                  <td className="num">{row.band.slaHours === null ? "—" : `${row.band.slaHours} h`}</td>
                  <BacklogCells row={row} />
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </div>

      <ActionNotices>
        <div className="panel overflow-x-auto">
          <table className="data-table">
            <caption className="px-2 pt-2 text-left text-sm font-semibold">
              Analysts
              <span className="ml-2 font-normal text-ink-soft">
                closing rate over the last {parameters.rateWindowHours} h of work; median handling over {parameters.handlingWindowDays} days
              </span>
            </caption>
            <thead>
              <tr>
                <th>Analyst</th>
                <th>On shift</th>
                <th>In review</th>
                <th className="num">Closed today</th>
                <th className="num">Closing rate</th>
                <th className="num">Median handling</th>
                {canManage && <th>Actions</th>}
              </tr>
            </thead>
            <tbody>
              {workload.analysts.length === 0 && (
                <tr>
                  <td colSpan={canManage ? 7 : 6} className="text-ink-soft">
                    Nobody has claimed or closed an alert in the last {parameters.handlingWindowDays} days.
                  </td>
                </tr>
              )}
              {workload.analysts.map((analyst) => {
                const held = analyst.held.map((alert) => ({ alertId: alert.alertId, externalId: alert.externalId, heldFor: formatDuration(now.getTime() - alert.claimedAt.getTime()) }));
                return (
                  <tr key={analyst.userId} className="align-top">
                    <th scope="row" className="font-normal">
                      {analyst.displayName}
                      {!analyst.active && <span className="ml-1 text-xs text-ink-faint">(deactivated)</span>}
                      {analyst.role !== "analyst" && <span className="ml-1 text-xs text-ink-faint">{analyst.role}</span>}
                    </th>
                    <td className={analyst.onShift ? "text-fine" : "text-ink-faint"}>
                      {analyst.onShift ? "yes" : analyst.lastActivityAt ? `last seen ${formatDuration(now.getTime() - analyst.lastActivityAt.getTime())} ago` : "no"}
                    </td>
                    <td>
                      {held.length === 0 ? (
                        <span className="text-ink-faint">none</span>
                      ) : (
                        <ul className="space-y-1">
                          {held.map((alert) => (
                            <li key={alert.alertId} className="space-y-1">
                              <span className="font-mono text-xs">{alert.externalId}</span> <span className="text-xs text-ink-soft">for {alert.heldFor}</span>
                              {canManage && (
                                <ReassignControl
                                  alert={alert}
                                  holderId={analyst.userId}
                                  holderName={analyst.displayName}
                                  assignees={workload.assignees}
                                  maxHeld={parameters.maxHeldPerAnalyst}
                                  leaseMinutes={parameters.claimLeaseMinutes}
                                />
                              )}
                            </li>
                          ))}
                        </ul>
                      )}
                    </td>
                    <td className="num">{analyst.closedToday}</td>
                    <td className="num" title={`${analyst.reviewsInRateWindow} reviews over ${analyst.hoursAtWork.toFixed(1)} h at work`}>
                      {rate(analyst.closingRatePerHour)}
                    </td>
                    <td className="num">{analyst.medianHandlingSeconds === null ? "—" : formatDuration(analyst.medianHandlingSeconds * 1000)}</td>
                    {canManage && (
                      <td>
                        <ReleaseAllControl analystId={analyst.userId} analystName={analyst.displayName} held={held} />
                      </td>
                    )}
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>

      </ActionNotices>

      <div className="grid gap-4 lg:grid-cols-2">
        <div className="panel space-y-2 p-3">
          <h2 className="text-sm font-semibold">Arrived versus closed, last {parameters.days} days</h2>
          <BacklogChart history={workload.history} />
        </div>
        <div className="panel space-y-2 p-3">
          <h2 className="text-sm font-semibold">Age of the open alerts</h2>
          <AgeChart bins={workload.ageDistribution} />
        </div>
      </div>

      <details className="panel p-3 text-xs text-ink-soft">
        <summary className="cursor-pointer font-semibold text-ink">How these numbers are counted</summary>
        <ul className="mt-2 max-w-3xl list-disc space-y-1 pl-5">
          <li>Open means not closed: waiting, in review, or waiting for a second review. Age is the time since the alert arrived; days are UTC days.</li>
          <li>Overdue: open and past its due time (arrival + the SLA hours of its expected-loss band).</li>
          <li>
            Overdue in the next {parameters.horizonHours} h: open alerts not yet due that would still be open at their due time if the team worked every open
            alert in due order at its current rate. The queue itself orders by expected loss, so read this as an estimate.
          </li>
          <li>
            On shift: claimed or closed an alert in the last {parameters.onShiftHours} h (a claim that was released or ran out without an outcome does not
            count). Closing rate: reviews recorded in the last {parameters.rateWindowHours} h, divided by the hours since that person&apos;s first claim in
            that window (at least one hour). The team&apos;s rate is the sum over those on shift.
          </li>
          <li>Time to clear: open alerts ÷ the team&apos;s rate, assuming nothing new arrives; on a busy day it is a lower bound.</li>
          <li>Median handling: claim to close over the last {parameters.handlingWindowDays} days, outcomes recorded on screen only (imported ones are left out).</li>
          <li>Leases that ran out are returned to the queue before counting, as they are before every claim.</li>
        </ul>
      </details>
    </section>
  );
}
