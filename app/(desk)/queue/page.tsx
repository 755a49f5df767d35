import type { Metadata } from "next";
import Link from "next/link";
import { db } from "@/lib/db/client";
import { requirePagePermission } from "@/lib/auth/current-user";
import { can } from "@/lib/auth/permissions";
import { getSettings } from "@/lib/settings/get-settings";
import { listModelVersions } from "@/lib/model-versions/list-model-versions";
import { findWaitingAlerts, QUEUE_PAGE_SIZE, waitingAlertFilterSchema } from "@/lib/queue/find-waiting-alerts";
import { getQueueCounts } from "@/lib/queue/get-queue-counts";
import { getHeldAlerts } from "@/lib/queue/get-held-alerts";
import { listSecondReviews } from "@/lib/outcomes/list-second-reviews";
import { outcomeLabels } from "@/lib/outcomes/schemas";
import { formatDuration, formatMoney, formatProbability, formatUtc } from "@/app/components/format";
import { NotAllowed } from "@/app/components/not-allowed";
import { KeyboardShortcuts, type Shortcut } from "@/app/components/keyboard-shortcuts";
import { TakeNext } from "@/app/(desk)/queue/take-next";
import { TAKE_NEXT_FORM_ID } from "@/app/(desk)/alerts/[id]/form-ids";

export const metadata: Metadata = { title: "Queue" };
export const dynamic = "force-dynamic";

type SearchParams = Record<string, string | string[] | undefined>;

const channelLabel = (channel: string) => channel.replaceAll("_", " ");

function dueText(dueAt: Date | null, overdue: boolean, now: Date): string {
  if (!dueAt) return "—";
  return overdue ? `overdue ${formatDuration(now.getTime() - dueAt.getTime())}` : `in ${formatDuration(dueAt.getTime() - now.getTime())}`;
}

/** The current filters as URL parameters, with one changed. */
function queryWith(params: SearchParams, change: Record<string, string | null>): string {
  const query = new URLSearchParams();
  for (const [key, value] of Object.entries(params)) {
    const first = Array.isArray(value) ? value[0] : value;
    if (first) query.set(key, first);
  }
  for (const [key, value] of Object.entries(change)) {
    if (value === null) query.delete(key);
    else query.set(key, value);
  }
  const text = query.toString();
  return text ? `/queue?${text}` : "/queue";
}

export default async function QueuePage({ searchParams }: { searchParams: Promise<SearchParams> }) {
  const access = await requirePagePermission("queue.view");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const user = access.user;
  const mayWork = can(user.role, "alert.work");
  const maySecondReview = can(user.role, "alert.second_review");
  const params = await searchParams;
  const parsed = waitingAlertFilterSchema.safeParse(params);
  const filter = parsed.success ? parsed.data : { page: 1, overdue: false, model: undefined, channel: undefined, min: undefined, max: undefined };
  const filterProblems = parsed.success ? [] : parsed.error.issues.map((issue) => `${String(issue.path[0] ?? "filter")}: ${issue.message}`);
  const now = new Date();
  const database = db();

  const [counts, page, held, secondReviews, settings, versions] = await Promise.all([
    getQueueCounts(database, { now }),
    findWaitingAlerts(database, {
      now,
      filter: { modelVersionId: filter.model, channel: filter.channel, amountMinMinor: filter.min, amountMaxMinor: filter.max, overdueOnly: filter.overdue },
      limit: QUEUE_PAGE_SIZE,
      offset: (filter.page - 1) * QUEUE_PAGE_SIZE,
    }),
    mayWork ? getHeldAlerts(database, { userId: user.id, now }) : Promise.resolve([]),
    maySecondReview ? listSecondReviews(database, { viewerId: user.id }) : Promise.resolve([]),
    getSettings(database),
    listModelVersions(database),
  ]);
  const filtered = Boolean(filter.model || filter.channel || filter.min !== undefined || filter.max !== undefined || filter.overdue);
  const firstRow = (filter.page - 1) * QUEUE_PAGE_SIZE + 1;
  const lastPage = Math.max(1, Math.ceil(page.total / QUEUE_PAGE_SIZE));
  const totalText = page.totalIsCapped ? `${page.total.toLocaleString("en")} or more` : page.total.toLocaleString("en");
  const reviewable = secondReviews.filter((item) => !item.ownFirstReview);
  const shortcuts: Shortcut[] = mayWork ? [{ keys: "t", label: "Take the next alert", action: { submit: TAKE_NEXT_FORM_ID } }] : [];

  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center gap-x-6 gap-y-2">
        <h1 className="text-lg font-semibold">Queue</h1>
        <dl className="flex flex-wrap gap-x-5 gap-y-1 text-sm" aria-label="Queue counts">
          <div className="flex gap-1.5">
            <dt className="text-ink-soft">Waiting</dt>
            <dd className="font-semibold tabular-nums">{counts.waiting}</dd>
          </div>
          <div className="flex gap-1.5">
            <dt className="text-ink-soft">Overdue</dt>
            <dd className={`font-semibold tabular-nums ${counts.overdue > 0 ? "text-overdue" : ""}`}>{counts.overdue}</dd>
          </div>
          <div className="flex gap-1.5">
            <dt className="text-ink-soft">In review</dt>
            <dd className="font-semibold tabular-nums">{counts.inReview}</dd>
          </div>
          <div className="flex gap-1.5">
            <dt className="text-ink-soft">Waiting for a second review</dt>
            <dd className="font-semibold tabular-nums">{counts.secondReview}</dd>
          </div>
        </dl>
        <div className="ml-auto">{shortcuts.length > 0 && <KeyboardShortcuts shortcuts={shortcuts} title="Queue shortcuts" />}</div>
      </div>

      {mayWork && (
        <section aria-labelledby="mine-heading" className="panel flex flex-wrap items-start gap-6 p-4">
          <div className="min-w-56">
            <TakeNext />
            <p className="mt-2 text-xs text-ink-soft">Claims the alert at the top of the queue for you, for {settings.queue.claimLeaseMinutes} minutes.</p>
          </div>
          <div className="flex-1">
            <h2 id="mine-heading" className="mb-1 text-sm font-semibold">
              Your alerts in review
            </h2>
            {held.length === 0 ? (
              <p className="text-sm text-ink-soft">You hold no alerts. Take the next one when you are ready.</p>
            ) : (
              <ul className="space-y-1 text-sm">
                {held.map((alert) => (
                  <li key={alert.id} className="flex flex-wrap items-baseline gap-x-3">
                    <Link href={`/alerts/${alert.id}`} className="font-mono text-accent underline">
                      {alert.externalId}
                    </Link>
                    <span className="tabular-nums">{formatMoney(alert.amountMinor, alert.currency)}</span>
                    <span className="text-ink-soft">EL {formatMoney(alert.expectedLossMinor, alert.currency)}</span>
                    <span className={alert.leaseExpired ? "text-overdue" : "text-ink-soft"}>
                      {alert.leaseExpired ? "claim ran out; it returns to the queue at the next claim" : `claim ends in ${formatDuration(alert.leaseExpiresAt.getTime() - now.getTime())}`}
                    </span>
                  </li>
                ))}
              </ul>
            )}
          </div>
        </section>
      )}

      {maySecondReview && secondReviews.length > 0 && (
        <section aria-labelledby="second-heading" className="panel p-4">
          <h2 id="second-heading" className="mb-2 text-sm font-semibold">
            Waiting for a second review ({reviewable.length} you may give)
          </h2>
          <table className="data-table" aria-labelledby="second-heading">
            <thead>
              <tr>
                <th scope="col">Alert</th>
                <th scope="col">First review</th>
                <th scope="col">By</th>
                <th scope="col" className="num">
                  Exposure
                </th>
                <th scope="col" className="num">
                  Waiting since
                </th>
              </tr>
            </thead>
            <tbody>
              {secondReviews.map((item) => (
                <tr key={item.id}>
                  <td>
                    <Link href={`/alerts/${item.id}`} className="font-mono text-accent underline">
                      {item.externalId}
                    </Link>
                  </td>
                  <td>
                    {outcomeLabels[item.firstOutcome]} <span className="text-ink-soft">({item.firstReason})</span>
                  </td>
                  <td>{item.ownFirstReview ? <span className="text-ink-soft">you (someone else must review it)</span> : item.firstReviewerName}</td>
                  <td className="num">{formatMoney(item.exposureMinor, item.currency)}</td>
                  <td className="num">{formatDuration(now.getTime() - item.sentAt.getTime())}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      )}

      <section aria-labelledby="waiting-heading" className="space-y-2">
        <h2 id="waiting-heading" className="text-sm font-semibold">
          Waiting alerts in priority order
        </h2>
        <form method="get" action="/queue" className="panel flex flex-wrap items-end gap-3 p-3" aria-label="Filter the waiting alerts">
          <div className="flex flex-col gap-1">
            <label htmlFor="filter-model" className="text-xs font-medium text-ink-soft">
              Model version
            </label>
            <select id="filter-model" name="model" defaultValue={filter.model ?? ""} className="field">
              <option value="">All</option>
              {versions.map((version) => (
                <option key={version.id} value={version.id}>
                  {version.modelName} {version.version}
                </option>
              ))}
            </select>
          </div>
          <div className="flex flex-col gap-1">
            <label htmlFor="filter-channel" className="text-xs font-medium text-ink-soft">
              Channel
            </label>
            <select id="filter-channel" name="channel" defaultValue={filter.channel ?? ""} className="field">
              <option value="">All</option>
              {settings.ingest.channels.map((channel) => (
                <option key={channel} value={channel}>
                  {channelLabel(channel)}
                </option>
              ))}
            </select>
          </div>
          <div className="flex flex-col gap-1">
            <label htmlFor="filter-min" className="text-xs font-medium text-ink-soft">
              Amount from
            </label>
            <input id="filter-min" name="min" inputMode="decimal" defaultValue={typeof params.min === "string" ? params.min : ""} className="field w-28" placeholder="0.00" />
          </div>
          <div className="flex flex-col gap-1">
            <label htmlFor="filter-max" className="text-xs font-medium text-ink-soft">
              Amount to
            </label>
            <input id="filter-max" name="max" inputMode="decimal" defaultValue={typeof params.max === "string" ? params.max : ""} className="field w-28" placeholder="any" />
          </div>
          <label className="flex items-center gap-2 pb-1.5 text-sm">
            <input type="checkbox" name="overdue" value="1" defaultChecked={filter.overdue} />
            Overdue only
          </label>
          <button type="submit" className="btn">
            Apply filters
          </button>
          {filtered && (
            <Link href="/queue" className="pb-1.5 text-sm text-accent underline">
              Clear filters
            </Link>
          )}
        </form>
        {filterProblems.length > 0 && (
          <p role="alert" className="text-sm text-overdue">
            These filters were not understood and are ignored: {filterProblems.join("; ")}.
          </p>
        )}

        {page.alerts.length === 0 ? (
          <div className="panel p-6 text-sm">
            {filtered || filter.page > 1 ? (
              <p>No waiting alerts match these filters.</p>
            ) : (
              <>
                <p className="font-medium">The queue is empty: no alerts are waiting.</p>
                <p className="mt-1 text-ink-soft">
                  {counts.lastArrivalAt
                    ? `The last alert arrived ${formatDuration(now.getTime() - counts.lastArrivalAt.getTime())} ago (${formatUtc(counts.lastArrivalAt)}).`
                    : "No alert has arrived yet."}{" "}
                  New alerts appear here as the scoring service sends them.
                </p>
              </>
            )}
          </div>
        ) : (
          <>
            <div className="panel overflow-x-auto">
              <table className="data-table" aria-labelledby="waiting-heading">
                <thead>
                  <tr>
                    <th scope="col" className="num">
                      #
                    </th>
                    <th scope="col">Alert</th>
                    <th scope="col">Model version</th>
                    <th scope="col" className="num">
                      Score
                    </th>
                    <th scope="col" className="num">
                      Probability
                    </th>
                    <th scope="col">Channel</th>
                    <th scope="col" className="num">
                      Amount
                    </th>
                    <th scope="col" className="num">
                      Exposure
                    </th>
                    <th scope="col" className="num">
                      Expected loss
                    </th>
                    <th scope="col" className="num">
                      Due
                    </th>
                  </tr>
                </thead>
                <tbody>
                  {page.alerts.map((alert, index) => (
                    <tr key={alert.id} className={alert.overdue ? "bg-overdue-wash/50" : undefined}>
                      <td className="num text-ink-faint">{firstRow + index}</td>
                      <td>
                        <Link href={`/alerts/${alert.id}`} className="font-mono text-xs text-accent underline">
                          {alert.externalId}
                        </Link>
                      </td>
                      <td className="whitespace-nowrap">
                        {alert.modelName} <span className="text-ink-soft">{alert.modelVersion}</span>
                      </td>
                      <td className="num">{alert.score.toFixed(3)}</td>
                      <td className="num">
                        {formatProbability(alert.probability)}
                        {!alert.calibrated && (
                          <abbr title="Not calibrated yet: a corrected score or the model version's prior hit rate" className="ml-0.5 text-attention no-underline">
                            *
                          </abbr>
                        )}
                      </td>
                      <td className="whitespace-nowrap">{channelLabel(alert.channel)}</td>
                      <td className="num">{formatMoney(alert.amountMinor, alert.currency)}</td>
                      <td className="num">{formatMoney(alert.exposureMinor, alert.currency)}</td>
                      <td className="num font-medium">{formatMoney(alert.expectedLossMinor, alert.currency)}</td>
                      <td className={`num ${alert.overdue ? "font-semibold text-overdue" : ""}`}>{dueText(alert.dueAt, alert.overdue, now)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
            <div className="flex flex-wrap items-center gap-4 text-sm">
              <p className="text-ink-soft">
                {firstRow}–{firstRow + page.alerts.length - 1} of {totalText} waiting{filtered ? " that match" : ""}.{" "}
                <span className="text-attention">*</span> probability not calibrated yet.
              </p>
              <nav aria-label="Pages" className="ml-auto flex gap-3">
                {filter.page > 1 ? (
                  <Link href={queryWith(params, { page: filter.page === 2 ? null : String(filter.page - 1) })} className="btn" rel="prev">
                    Previous page
                  </Link>
                ) : null}
                <span className="self-center text-ink-soft">
                  Page {filter.page} of {lastPage.toLocaleString("en")}
                  {page.totalIsCapped ? "+" : ""}
                </span>
                {filter.page < lastPage || (page.totalIsCapped && page.alerts.length === QUEUE_PAGE_SIZE) ? (
                  <Link href={queryWith(params, { page: String(filter.page + 1) })} className="btn" rel="next">
                    Next page
                  </Link>
                ) : null}
              </nav>
            </div>
          </>
        )}
      </section>
    </div>
  );
}
