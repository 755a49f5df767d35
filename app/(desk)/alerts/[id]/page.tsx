import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { db } from "@/lib/db/client";
import { requirePagePermission } from "@/lib/auth/current-user";
import { can } from "@/lib/auth/permissions";
import { isAppError } from "@/lib/errors";
import { getSettings } from "@/lib/settings/get-settings";
import { getAlertDetail, type AlertDetail } from "@/lib/alerts/get-alert-detail";
import { findEntityHistory, type EntityHistory } from "@/lib/alerts/find-entity-history";
import { outcomeLabels, type OutcomeValue } from "@/lib/outcomes/schemas";
import { formatDuration, formatMoney, formatProbability, formatUtc } from "@/app/components/format";
import { Caution } from "@/app/components/caution";
import { NotAllowed } from "@/app/components/not-allowed";
import { AlertTimeline } from "@/app/components/alert-timeline";
import { KeyboardShortcuts, type Shortcut } from "@/app/components/keyboard-shortcuts";
import { TakeNext } from "@/app/(desk)/queue/take-next";
import { ViewerTime } from "@/app/(desk)/alerts/[id]/viewer-time";
import { ClaimForm, OutcomeForm, ReleaseForm, SecondReviewForm } from "@/app/(desk)/alerts/[id]/outcome-forms";
import { CLAIM_FORM_ID, NOTE_FIELD_ID, OUTCOME_FORM_ID, outcomeFieldId, outcomeKeys, RELEASE_FORM_ID, TAKE_NEXT_FORM_ID } from "@/app/(desk)/alerts/[id]/form-ids";

export const metadata: Metadata = { title: "Alert" };
export const dynamic = "force-dynamic";

const stateLabels: Record<AlertDetail["state"], string> = {
  waiting: "Waiting",
  in_review: "In review",
  second_review: "Waiting for a second review",
  closed: "Closed",
};
const sourceLabels = { chargeback: "Chargeback", customer_report: "Customer report", analyst: "Analyst" } as const;
const percent = (value: number, digits = 1) => `${(value * 100).toFixed(digits)}%`;
const channelLabel = (channel: string) => channel.replaceAll("_", " ");
/** Seconds matter for short handling times; formatDuration rounds to minutes. */
const handlingTime = (seconds: number) => (seconds < 90 ? `${seconds} s` : formatDuration(seconds * 1000));

function OutcomeBadge({ outcome }: { outcome: OutcomeValue }) {
  const tone = outcome === "confirmed_fraud" ? "bg-overdue-wash text-overdue" : outcome === "legitimate" ? "bg-fine-wash text-fine" : "bg-attention-wash text-attention";
  return <span className={`rounded px-1.5 py-0.5 text-xs font-semibold ${tone}`}>{outcomeLabels[outcome]}</span>;
}

function Fact({ term, children }: { term: string; children: React.ReactNode }) {
  return (
    <div className="grid grid-cols-[10rem_1fr] gap-2 py-1">
      <dt className="text-ink-soft">{term}</dt>
      <dd>{children}</dd>
    </div>
  );
}

export default async function AlertPage({ params }: { params: Promise<{ id: string }> }) {
  const access = await requirePagePermission("alert.view");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const user = access.user;
  const { id } = await params;
  const now = new Date();
  const database = db();

  let alert: AlertDetail;
  let history: EntityHistory;
  try {
    [alert, history] = await Promise.all([getAlertDetail(database, { alertId: id, now }), findEntityHistory(database, { alertId: id, now })]);
  } catch (error) {
    if (isAppError(error) && error.code === "not_found") notFound();
    throw error;
  }
  const { queue } = await getSettings(database);

  const mayWork = can(user.role, "alert.work");
  const holdsIt = alert.state === "in_review" && alert.holder?.id === user.id;
  const first = alert.outcomes.find((outcome) => outcome.round === 1) ?? null;
  const maySecondReview = alert.state === "second_review" && can(user.role, "alert.second_review") && first !== null && first.reviewerId !== user.id;
  const showOutcomeForm = mayWork && holdsIt;
  const showTakeNext = mayWork && !holdsIt;
  const aboveFourEyes = alert.expectedLoss.exposureMinor === null || alert.expectedLoss.exposureMinor >= queue.fourEyesExposureMinor;

  const shortcuts: Shortcut[] = [];
  if (showTakeNext) shortcuts.push({ keys: "t", label: "Take the next alert", action: { submit: TAKE_NEXT_FORM_ID } });
  if (mayWork && alert.state === "waiting") shortcuts.push({ keys: "c", label: "Take this alert", action: { submit: CLAIM_FORM_ID } });
  if (showOutcomeForm || maySecondReview) {
    for (const outcome of ["confirmed_fraud", "legitimate", "inconclusive"] as const) {
      shortcuts.push({ keys: outcomeKeys[outcome], label: `Choose “${outcomeLabels[outcome]}”`, action: { click: outcomeFieldId(outcome) } });
    }
    shortcuts.push({ keys: "n", label: "Write in the note", action: { focus: NOTE_FIELD_ID } });
    shortcuts.push({ keys: "ctrl+enter", label: showOutcomeForm ? "Record the outcome" : "Record the second review", action: { submit: OUTCOME_FORM_ID } });
  }
  if (showOutcomeForm) shortcuts.push({ keys: "r", label: "Release the alert back to the queue", action: { submit: RELEASE_FORM_ID } });

  const { expectedLoss: el, model } = alert;
  const historyStandsOut = history.summary.confirmedFraud > 0 || history.summary.fraudLabels > 0;

  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center gap-x-4 gap-y-2">
        <p className="text-sm">
          <Link href="/queue" className="text-accent underline">
            Queue
          </Link>{" "}
          /
        </p>
        <h1 className="font-mono text-lg font-semibold">{alert.externalId}</h1>
        <span className="rounded bg-accent-wash px-2 py-0.5 text-xs font-semibold text-accent-strong">{stateLabels[alert.state]}</span>
        {alert.finalOutcome && <OutcomeBadge outcome={alert.finalOutcome} />}
        {alert.state !== "closed" && alert.dueAt && (
          <span className={`text-sm ${alert.overdue ? "font-semibold text-overdue" : "text-ink-soft"}`}>
            {alert.overdue ? `Overdue by ${formatDuration(now.getTime() - alert.dueAt.getTime())}` : `Due in ${formatDuration(alert.dueAt.getTime() - now.getTime())}`}
          </span>
        )}
        {alert.belowTheLine && (
          <span className="rounded bg-attention-wash px-2 py-0.5 text-xs text-attention" title="Sent on purpose from below the model's alert threshold, to measure what the threshold misses">
            Below-the-line sample (π = {alert.inclusionProbability})
          </span>
        )}
        <div className="ml-auto">{shortcuts.length > 0 && <KeyboardShortcuts shortcuts={shortcuts} title="Alert shortcuts" />}</div>
      </div>

      <div className="grid gap-4 lg:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="space-y-4">
          <section aria-labelledby="facts-heading" className="panel p-4">
            <h2 id="facts-heading" className="mb-2 text-sm font-semibold">
              Transaction
            </h2>
            <dl className="text-sm">
              <Fact term="Occurred at">
                <ViewerTime iso={alert.occurredAt.toISOString()} />
              </Fact>
              <Fact term="Amount">
                <span className="font-semibold tabular-nums">{formatMoney(alert.amountMinor, alert.currency)}</span> <span className="text-ink-soft">{alert.currency}</span>
              </Fact>
              <Fact term="Channel">{channelLabel(alert.channel)}</Fact>
              <Fact term="Merchant category">
                <span className="font-mono">{alert.merchantCategory.code}</span> {alert.merchantCategory.description}
              </Fact>
              <Fact term="Merchant country">{alert.merchantCountry}</Fact>
              <Fact term="Card or account">
                <span className="font-mono">{alert.entityRefMasked}</span>
              </Fact>
              <Fact term="Arrived">
                <ViewerTime iso={alert.receivedAt.toISOString()} />
              </Fact>
            </dl>
          </section>

          <section aria-labelledby="model-heading" className="panel p-4">
            <h2 id="model-heading" className="mb-2 text-sm font-semibold">
              What the model says
            </h2>
            <dl className="text-sm">
              <Fact term="Model version">
                {model.modelName} <span className="font-mono">{model.version}</span> <span className="text-ink-soft">({model.scoreKind === "probability" ? "probability score" : "anomaly score"})</span>
              </Fact>
              <Fact term="Raw score">
                <span className="font-mono">{model.score}</span> <span className="text-ink-soft">(alert threshold {model.alertThreshold})</span>
              </Fact>
              <Fact term="Probability of fraud">
                <span className="font-semibold">{formatProbability(model.probability)}</span>{" "}
                {model.calibrated ? <span className="text-fine">calibrated</span> : <span className="text-attention">not calibrated</span>}
                <p className="mt-0.5 text-xs text-ink-soft">
                  {model.derivation.source === "calibration_map" ? (
                    <>
                      From the calibration map fitted on {formatUtc(model.derivation.map.fittedAt)} on {model.derivation.map.labelCount} reviewed alerts (
                      {model.derivation.map.positiveCount} confirmed fraud; Brier score {model.derivation.map.brierScore.toFixed(3)}).
                      {!model.derivation.isLatestMap && " A newer map exists; this alert kept the numbers it was given."}
                    </>
                  ) : model.derivation.source === "corrected_score" ? (
                    <>
                      The score corrected for the undersampled training data: p = β·s / (β·s − s + 1) with β = {model.derivation.negativeSamplingRate} and s = {model.score}
                      {model.derivation.negativeSamplingRate === 1 ? " (β = 1: no correction)" : ""}. No calibration map yet: too few reviewed alerts.
                    </>
                  ) : model.derivation.source === "prior_hit_rate" ? (
                    <>
                      The model version&apos;s prior hit rate ({model.derivation.priorHitRate === null ? "—" : percent(model.derivation.priorHitRate)}): an anomaly score is not a
                      probability, and no calibration map exists yet.
                    </>
                  ) : (
                    "Not derived yet."
                  )}
                </p>
              </Fact>
            </dl>

            <h3 className="mt-3 mb-1 text-xs font-semibold text-ink-soft">Expected loss</h3>
            <table className="data-table max-w-xl" aria-label="Expected-loss arithmetic">
              <tbody>
                <tr>
                  <th scope="row">Amount A</th>
                  <td className="num">{formatMoney(el.amountMinor, alert.currency)}</td>
                </tr>
                <tr>
                  <th scope="row">Recovery rate r ({channelLabel(alert.channel)})</th>
                  <td className="num">{percent(el.recoveryRate, 0)}</td>
                </tr>
                <tr>
                  <th scope="row">Fixed cost of a fraud f</th>
                  <td className="num">{formatMoney(el.fixedCostMinor, el.homeCurrency)}</td>
                </tr>
                <tr>
                  <th scope="row">Exposure E = A·(1 − r) + f</th>
                  <td className="num font-medium">{formatMoney(el.exposureMinor, alert.currency)}</td>
                </tr>
                <tr>
                  <th scope="row">Probability p</th>
                  <td className="num">{formatProbability(el.probability)}</td>
                </tr>
                <tr>
                  <th scope="row">Expected loss EL = p·E</th>
                  <td className="num font-semibold">{formatMoney(el.expectedLossMinor, alert.currency)}</td>
                </tr>
                <tr>
                  <th scope="row">
                    Review cost c ({el.expectedHandlingMinutes} min) and value of review V = EL − c
                  </th>
                  <td className="num">
                    {formatMoney(el.reviewCostMinor, el.homeCurrency)} · {el.valueOfReviewMinor === null ? "—" : formatMoney(Math.round(el.valueOfReviewMinor), alert.currency)}
                  </td>
                </tr>
              </tbody>
            </table>
            {!el.storedMatchesSettings && (
              <p className="mt-1 text-xs text-attention">
                The cost settings changed after these numbers were derived. With today&apos;s settings E would be {formatMoney(el.recomputed.exposureMinor, alert.currency)} and EL{" "}
                {formatMoney(el.recomputed.expectedLossMinor, alert.currency)}.
              </p>
            )}

            <h3 className="mt-3 mb-1 text-xs font-semibold text-ink-soft">Reason codes, largest contribution first</h3>
            {alert.reasonCodes.length === 0 ? (
              <p className="text-sm text-ink-soft">The scoring service sent no reason codes.</p>
            ) : (
              <table className="data-table max-w-xl" aria-label="Reason codes">
                <thead>
                  <tr>
                    <th scope="col">Code</th>
                    <th scope="col" className="num">
                      Contribution
                    </th>
                    <th scope="col">Share</th>
                  </tr>
                </thead>
                <tbody>
                  {alert.reasonCodes.map((code) => (
                    <tr key={code.code}>
                      <td className="font-mono text-xs">{code.code}</td>
                      <td className="num">{code.contribution.toFixed(3)}</td>
                      <td>
                        <span className="flex items-center gap-2">
                          <span className="h-2 rounded bg-accent" style={{ width: `${Math.max(2, code.share * 100)}px` }} aria-hidden />
                          <span className="text-xs text-ink-soft">{percent(code.share, 0)}</span>
                        </span>
                      </td>
                    </tr>
                  ))}
                </tbody>
              </table>
            )}
          </section>

          <section aria-labelledby="history-heading" className="panel p-4">
            <h2 id="history-heading" className="mb-1 text-sm font-semibold">
              Same card or account, last {history.days} days
            </h2>
            {historyStandsOut && (
              <p className="mb-2 rounded border border-overdue/40 bg-overdue-wash px-3 py-2 text-sm text-overdue" role="note">
                This card or account had fraud recently: {history.summary.confirmedFraud} alert{history.summary.confirmedFraud === 1 ? "" : "s"} confirmed as fraud,{" "}
                {history.summary.fraudLabels} with a fraud label (chargeback or customer report).
              </p>
            )}
            {history.alerts.length === 0 ? (
              <p className="text-sm text-ink-soft">No other alerts for this card or account since {formatUtc(history.since)}.</p>
            ) : (
              <table className="data-table" aria-labelledby="history-heading">
                <thead>
                  <tr>
                    <th scope="col">Occurred</th>
                    <th scope="col">Alert</th>
                    <th scope="col" className="num">
                      Amount
                    </th>
                    <th scope="col">Merchant</th>
                    <th scope="col">Outcome</th>
                    <th scope="col">Labels</th>
                  </tr>
                </thead>
                <tbody>
                  {history.alerts.map((other) => {
                    const fraud = other.finalOutcome === "confirmed_fraud" || other.labels.some((label) => label.label === "fraud");
                    return (
                      <tr key={other.id} className={fraud ? "bg-overdue-wash/60" : undefined}>
                        <td className="whitespace-nowrap">{formatUtc(other.occurredAt)}</td>
                        <td className="whitespace-nowrap">
                          <Link href={`/alerts/${other.id}`} className="font-mono text-xs text-accent underline">
                            {other.externalId}
                          </Link>
                        </td>
                        <td className="num">{formatMoney(other.amountMinor, other.currency)}</td>
                        <td className="whitespace-nowrap">
                          <span className="font-mono text-xs">{other.merchantCategoryCode}</span> {other.merchantCountry} · {channelLabel(other.channel)}
                        </td>
                        <td>
                          {other.finalOutcome ? (
                            <>
                              <OutcomeBadge outcome={other.finalOutcome} />
                              {other.firstOutcome && other.firstOutcome !== other.finalOutcome && (
                                <span className="ml-1 text-xs text-ink-soft">(first: {outcomeLabels[other.firstOutcome]})</span>
                              )}
                            </>
                          ) : (
                            <span className="text-ink-soft">{stateLabels[other.state]}</span>
                          )}
                        </td>
                        <td className="text-xs">
                          {other.labels.length === 0
                            ? "—"
                            : other.labels.map((label) => (
                                <span key={`${label.source}-${label.observedAt.toISOString()}`} className={`mr-1 whitespace-nowrap ${label.label === "fraud" ? "font-semibold text-overdue" : "text-fine"}`}>
                                  {sourceLabels[label.source]}: {label.label} ({formatUtc(label.observedAt).slice(0, 10)})
                                </span>
                              ))}
                        </td>
                      </tr>
                    );
                  })}
                </tbody>
              </table>
            )}
            {history.more && <p className="mt-1 text-xs text-ink-soft">Showing the newest {history.alerts.length} of {history.summary.alerts}.</p>}
          </section>
        </div>

        <aside className="space-y-4">
          <section aria-label="Work on this alert" className="panel space-y-3 p-4">
            {showOutcomeForm && (
              <>
                <p className="text-xs text-ink-soft">
                  You hold this alert{alert.leaseExpiresAt ? ` until ${formatUtc(alert.leaseExpiresAt)}` : ""}. Handling time runs from when you took it.
                </p>
                <OutcomeForm
                  alertId={alert.id}
                  reasons={queue.outcomeReasons}
                  fourEyesNote={
                    aboveFourEyes
                      ? `Exposure ${formatMoney(el.exposureMinor, alert.currency)} is at or above the four-eyes amount ${formatMoney(queue.fourEyesExposureMinor, alert.currency)}: “Legitimate” sends the alert to a second person instead of closing it.`
                      : null
                  }
                />
                <ReleaseForm alertId={alert.id} />
              </>
            )}
            {maySecondReview && first && (
              <>
                <p className="text-sm">
                  <span className="font-medium">{first.reviewerName}</span> recorded <OutcomeBadge outcome={first.outcome} /> ({first.reason}) at {formatUtc(first.closedAt)}.
                  {first.note && <span className="mt-1 block whitespace-pre-wrap rounded bg-paper p-2 text-xs">{first.note}</span>}
                </p>
                <SecondReviewForm alertId={alert.id} reasons={queue.outcomeReasons} firstOutcome={first.outcome} startedAt={now.toISOString()} />
              </>
            )}
            {!showOutcomeForm && !maySecondReview && (
              <div className="space-y-2 text-sm">
                {alert.state === "waiting" && (
                  <>
                    <p>This alert is waiting in the queue; nobody holds it.</p>
                    {mayWork && <ClaimForm alertId={alert.id} />}
                  </>
                )}
                {alert.state === "in_review" && (
                  <p>
                    <span className="font-medium">{alert.holder?.displayName ?? "Someone"}</span> is reviewing this alert
                    {alert.claimedAt ? ` (taken at ${formatUtc(alert.claimedAt)})` : ""}.
                  </p>
                )}
                {alert.state === "second_review" && (
                  <p>
                    Waiting for a second person under the four-eyes rule.
                    {first?.reviewerId === user.id && " You recorded the first outcome, so someone else must give the second review."}
                  </p>
                )}
                {alert.state === "closed" && alert.finalOutcome && (
                  <p>
                    Closed as <OutcomeBadge outcome={alert.finalOutcome} />
                    {alert.closedAt ? ` at ${formatUtc(alert.closedAt)}` : ""}.
                  </p>
                )}
              </div>
            )}
            {showTakeNext && (
              <div className="border-t border-rule pt-3">
                <TakeNext size="small" />
              </div>
            )}
            <Caution className="border-t border-rule pt-3" />
          </section>

          <section aria-labelledby="reviews-heading" className="panel p-4">
            <h2 id="reviews-heading" className="mb-2 text-sm font-semibold">
              Outcomes
            </h2>
            {alert.outcomes.length === 0 ? (
              <p className="text-sm text-ink-soft">No outcome recorded yet.</p>
            ) : (
              <ol className="space-y-2 text-sm">
                {alert.outcomes.map((outcome) => (
                  <li key={outcome.round}>
                    <p>
                      <span className="text-ink-soft">{outcome.round === 1 ? "First review" : "Second review"}:</span> <OutcomeBadge outcome={outcome.outcome} />{" "}
                      <span className="text-ink-soft">{outcome.reason}</span>
                    </p>
                    <p className="text-xs text-ink-soft">
                      {outcome.reviewerName}, {formatUtc(outcome.closedAt)}, handled in {handlingTime(outcome.handlingSeconds)}
                      {outcome.origin === "imported" ? " (imported)" : ""}
                    </p>
                    {outcome.note && <p className="mt-1 whitespace-pre-wrap rounded bg-paper p-2 text-xs">{outcome.note}</p>}
                  </li>
                ))}
              </ol>
            )}
            {alert.labels.length > 0 && (
              <>
                <h3 className="mt-3 mb-1 text-xs font-semibold text-ink-soft">Labels</h3>
                <ul className="text-sm">
                  {alert.labels.map((label) => (
                    <li key={`${label.source}-${label.reference}`}>
                      {sourceLabels[label.source]}: <span className={label.label === "fraud" ? "font-semibold text-overdue" : "text-fine"}>{label.label}</span>{" "}
                      <span className="text-xs text-ink-soft">{formatUtc(label.observedAt)}</span>
                    </li>
                  ))}
                </ul>
              </>
            )}
          </section>

          <div className="panel p-4">
            <AlertTimeline alertId={alert.id} />
          </div>
        </aside>
      </div>
    </div>
  );
}
