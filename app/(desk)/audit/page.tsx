import type { Metadata } from "next";
import Link from "next/link";
import { headers } from "next/headers";
import { Suspense } from "react";
import { db } from "@/lib/db/client";
import { auditActorOf } from "@/lib/auth/actor";
import { requirePagePermission } from "@/lib/auth/current-user";
import { requestContextOf } from "@/lib/http/request-context";
import { isAppError, type FieldIssue } from "@/lib/errors";
import { auditQueryString, parseAuditQuery } from "@/lib/audit/audit-query";
import { findAuditEvents, type AuditEventsPage } from "@/lib/audit/find-audit-events";
import { recordAuditView } from "@/lib/audit/record-audit-view";
import { AUDIT_PAGE_SIZE_DEFAULT, auditActions, auditPresets, type AuditFilter, type AuditPage } from "@/lib/audit/schemas";
import { auditActionLabel, summarizeAuditPayload } from "@/lib/audit/summarize-audit-event";
import { NotAllowed } from "@/app/components/not-allowed";
import { AuditActor, AuditSubject, AuditTime } from "@/app/components/audit-event-parts";
import { ChainStatus } from "@/app/(desk)/audit/chain-status";

export const metadata: Metadata = { title: "Audit trail" };
export const dynamic = "force-dynamic";

const families = [...new Set(auditActions.map((action) => `${action.split(".")[0]}.*`))];
const DAY = /^\d{4}-\d{2}-\d{2}$/;
// A date input can only hold a valid calendar day; anything else (an instant from an API link, a
// mistyped day being reported) stays visible and editable as text instead of vanishing.
const dateInputType = (value: string, errors: string[]) => (value === "" || (DAY.test(value) && errors.length === 0) ? "date" : "text");

type SearchParams = Record<string, string | string[] | undefined>;

/** The page's own query with a request to recompute every event of the chain (ChainStatus). */
function fullWalkQuery(raw: SearchParams): string {
  const query = new URLSearchParams();
  for (const [name, value] of Object.entries(raw)) {
    if (name === "verify" || value === undefined) continue;
    for (const one of Array.isArray(value) ? value : [value]) query.append(name, one);
  }
  query.set("verify", "full");
  return query.toString();
}

export default async function AuditTrailPage({ searchParams }: { searchParams: Promise<SearchParams> }) {
  const access = await requirePagePermission("audit.view");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const raw = await searchParams;

  let query: { filter: AuditFilter; page: AuditPage } | null = null;
  let issues: FieldIssue[] = [];
  try {
    query = parseAuditQuery(raw);
  } catch (error) {
    if (!isAppError(error)) throw error;
    issues = error.issues;
  }

  let result: AuditEventsPage | null = null;
  if (query) {
    result = await findAuditEvents(db(), query);
    const context = requestContextOf(await headers());
    await recordAuditView(db(), { actor: auditActorOf(access.user), filter: query.filter, context });
  }

  const first = (name: string) => {
    const value = raw[name];
    return (Array.isArray(value) ? value[0] : value) ?? "";
  };
  const issueFor = (name: string) => issues.filter((issue) => issue.path === name).map((issue) => issue.message);
  // Ties a field to its error message for screen readers.
  const invalid = (name: string) => (issueFor(name).length > 0 ? { "aria-invalid": true, "aria-describedby": `audit-${name}-error` } : {});
  const limit = query?.page.limit ?? AUDIT_PAGE_SIZE_DEFAULT;

  return (
    <section aria-labelledby="audit-heading" className="space-y-4">
      <div className="space-y-1">
        <h1 id="audit-heading" className="text-lg font-semibold">
          Audit trail
        </h1>
        <p className="max-w-3xl text-sm text-ink-soft">
          Every change in Triage Desk, in the order it was written: who did it, when, to what, and on what grounds. Events cannot be changed
          or deleted, and each one carries the hash of the one before, so a change made behind the application&apos;s back shows as a broken
          link below. Looking at this page is recorded too.
        </p>
      </div>

      <div className="panel space-y-3 p-3">
        <Suspense fallback={<p className="text-sm text-ink-soft">Verifying the chain…</p>}>
          <ChainStatus full={first("verify") === "full"} fullWalkHref={`/audit?${fullWalkQuery(raw)}`} />
        </Suspense>
        <details className="text-xs text-ink-soft">
          <summary className="cursor-pointer font-semibold text-ink">Why copy the head hash out of the database every day</summary>
          <div className="mt-2 max-w-3xl space-y-2">
            <p>
              The chain proves that nobody changed or removed an event in the middle without rewriting every event after it. Someone with full
              control of the database could still do exactly that: rewrite the newest events and recompute their hashes, or cut them off. The
              chain would then verify again.
            </p>
            <p>
              A head hash written down where this database&apos;s administrators cannot change it (a ticket, an e-mail to compliance, write-once
              storage) closes that gap. If a copied hash is still in the chain, every event up to it is exactly as it was on the day it was
              copied; if it is gone, the log was rewritten. Check with <code className="font-mono">npm run audit:verify -- --anchor &lt;hash&gt;</code>{" "}
              or <code className="font-mono">GET /api/v1/audit/verify?anchor=&lt;hash&gt;</code>.
            </p>
          </div>
        </details>
      </div>

      <form method="get" action="/audit" className="panel space-y-3 p-3" aria-label="Filter the audit trail">
        <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4">
          <Field id="audit-preset" label="Question" errors={issueFor("preset")}>
            <select id="audit-preset" name="preset" {...invalid("preset")} defaultValue={first("preset")} className="field w-full">
              <option value="">All events</option>
              {Object.entries(auditPresets).map(([value, label]) => (
                <option key={value} value={value}>
                  {label}
                </option>
              ))}
            </select>
          </Field>
          <Field id="audit-actor" label="Actor" hint="e-mail, API client name or id" errors={issueFor("actor")}>
            <input id="audit-actor" name="actor" {...invalid("actor")} defaultValue={first("actor")} className="field w-full" autoComplete="off" spellCheck={false} />
          </Field>
          <Field id="audit-action" label="Action" hint="e.g. outcome.recorded or alert.*" errors={issueFor("action")}>
            <input id="audit-action" name="action" {...invalid("action")} list="audit-actions" defaultValue={first("action")} className="field w-full font-mono" autoComplete="off" spellCheck={false} />
            <datalist id="audit-actions">
              {[...families, ...auditActions].map((action) => (
                <option key={action} value={action} />
              ))}
            </datalist>
          </Field>
          <Field id="audit-alert" label="Alert" hint="internal or external id" errors={issueFor("alert")}>
            <input id="audit-alert" name="alert" {...invalid("alert")} defaultValue={first("alert")} className="field w-full font-mono" autoComplete="off" spellCheck={false} />
          </Field>
          <Field id="audit-from" label="From (UTC day, inclusive)" errors={issueFor("from")}>
            <input id="audit-from" name="from" {...invalid("from")} type={dateInputType(first("from"), issueFor("from"))} defaultValue={first("from")} className="field w-full" />
          </Field>
          <Field id="audit-to" label="To (UTC day, inclusive)" errors={issueFor("to")}>
            <input id="audit-to" name="to" {...invalid("to")} type={dateInputType(first("to"), issueFor("to"))} defaultValue={first("to")} className="field w-full" />
          </Field>
          <Field id="audit-limit" label="Rows per page" errors={issueFor("limit")}>
            <select id="audit-limit" name="limit" {...invalid("limit")} defaultValue={String(limit)} className="field w-full">
              {[50, 100, 200, 500].map((size) => (
                <option key={size} value={size}>
                  {size}
                </option>
              ))}
            </select>
          </Field>
          <div className="flex items-end gap-2">
            <button type="submit" className="btn btn-primary">
              Show events
            </button>
            <Link href="/audit" className="btn">
              Clear
            </Link>
          </div>
        </div>
        <p className="text-xs text-ink-soft">
          Who cleared an alert: choose that question and enter the alert&apos;s id. What a reviewer cleared: choose that question, enter their
          e-mail and the days. Both look at first outcomes and second reviews only.
        </p>
        {issues.length > 0 && (
          <p role="alert" className="rounded border border-overdue/40 bg-overdue-wash px-3 py-2 text-sm text-overdue">
            The filter was not applied: {issues.map((issue) => `${issue.path || "filter"}: ${issue.message}`).join("; ")}.
          </p>
        )}
      </form>

      {query && result && <Results query={query} result={result} />}
    </section>
  );
}

function Field({ id, label, hint, errors, children }: { id: string; label: string; hint?: string; errors: string[]; children: React.ReactNode }) {
  return (
    <div className="space-y-1">
      <label htmlFor={id} className="block text-xs font-semibold text-ink-soft">
        {label}
        {hint && <span className="ml-1 font-normal text-ink-faint">({hint})</span>}
      </label>
      {children}
      {errors.length > 0 && (
        <p id={`${id}-error`} className="text-xs text-overdue">
          {errors.join(" ")}
        </p>
      )}
    </div>
  );
}

function Results({ query, result }: { query: { filter: AuditFilter; page: AuditPage }; result: AuditEventsPage }) {
  const { filter, page } = query;
  const { resolved, events, matched } = result;
  const pageLink = (paging: Partial<AuditPage>) => `/audit${auditQueryString(filter, { ...paging, limit: page.limit })}`;
  const csvHref = `/api/v1/audit/events${auditQueryString(filter, {}, { format: "csv" })}`;
  return (
    <div className="space-y-2">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <p className="text-sm" role="status">
          {matched.capped ? `More than ${matched.count.toLocaleString("en")}` : matched.count.toLocaleString("en")} event{matched.count === 1 ? "" : "s"}{" "}
          match, newest first.
          {resolved.alert && resolved.alert.known.length === 0 && (
            <span className="ml-2 text-attention">No alert has the id &ldquo;{filter.alert}&rdquo;; only labels received for that external id can match.</span>
          )}
          {resolved.actor && resolved.actor.known.length === 0 && (
            <span className="ml-2 text-attention">No person or API client is called &ldquo;{filter.actor}&rdquo;; matching the name recorded on each event.</span>
          )}
        </p>
        <a href={csvHref} className="btn" download>
          Export these events as CSV
        </a>
      </div>

      {events.length === 0 ? (
        <p className="text-sm text-ink-soft">No events match this filter.</p>
      ) : (
        <div className="panel overflow-x-auto">
          <table className="data-table" aria-label="Audit events, newest first">
            <thead>
              <tr>
                <th>Time (UTC)</th>
                <th>Actor</th>
                <th>Action</th>
                <th>Subject</th>
                <th>Details</th>
                <th className="num">Event</th>
              </tr>
            </thead>
            <tbody>
              {events.map((event) => (
                <tr key={event.id}>
                  <td className="whitespace-nowrap font-mono text-xs">
                    <AuditTime at={event.occurredAt} />
                  </td>
                  <td className="whitespace-nowrap">
                    <AuditActor event={event} />
                  </td>
                  <td className="whitespace-nowrap" title={event.action}>
                    {auditActionLabel(event.action)}
                  </td>
                  <td className="whitespace-nowrap">
                    <AuditSubject event={event} />
                  </td>
                  <td className="text-xs text-ink-soft">{summarizeAuditPayload(event.action, event.payload)}</td>
                  <td className="num font-mono text-xs" title={`hash ${event.hash}${event.requestId ? `\nrequest ${event.requestId}` : ""}${event.ipAddress ? `\nfrom ${event.ipAddress}` : ""}`}>
                    {event.id}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}

      <nav aria-label="Pages of audit events" className="flex gap-3 text-sm">
        {page.before || page.after ? (
          <Link href={pageLink({})} className="text-accent underline">
            Newest
          </Link>
        ) : (
          <span className="text-ink-faint">Newest</span>
        )}
        {result.newerCursor ? (
          <Link href={pageLink({ after: result.newerCursor })} className="text-accent underline" rel="prev">
            ← Newer
          </Link>
        ) : (
          <span className="text-ink-faint">← Newer</span>
        )}
        {result.olderCursor ? (
          <Link href={pageLink({ before: result.olderCursor })} className="text-accent underline" rel="next">
            Older →
          </Link>
        ) : (
          <span className="text-ink-faint">Older →</span>
        )}
      </nav>
    </div>
  );
}
