// The window of the metric screens as a plain GET form, so the view lives in the URL and can be
// shared and reloaded; quick links for the windows people ask for most.
import Link from "next/link";
import type { ReactNode } from "react";
import type { FieldIssue } from "@/lib/errors";

const DAY_MS = 86_400_000;
const day = (time: number) => new Date(time).toISOString().slice(0, 10);
const DAY = /^\d{4}-\d{2}-\d{2}$/;

export function MetricsWindowForm({
  action,
  label,
  values,
  issues,
  now,
  labelMaturityDays,
  keep = [],
  showBucket = true,
  children,
}: {
  action: string;
  label: string;
  /** The values as the reader sent them, so a rejected one stays visible and editable. */
  values: Record<string, string>;
  issues: FieldIssue[];
  now: Date;
  labelMaturityDays: number;
  /** Parameters the quick links carry over (e.g. the champion and challenger). */
  keep?: [string, string][];
  /** Whether the screen draws series over time (and so takes a step). */
  showBucket?: boolean;
  children?: ReactNode;
}) {
  const today = Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate());
  const matureEnd = today - labelMaturityDays * DAY_MS - DAY_MS;
  const link = (params: [string, string][]) => `${action}?${new URLSearchParams([...params, ...keep]).toString()}`;
  const quick = [
    { label: "Last 28 days", href: link([]) },
    { label: "This week", href: link([["window", "week"]]) },
    { label: "Last week", href: link([["window", "week"], ["date", day(today - 7 * DAY_MS)]]) },
    { label: `Latest 4 mature weeks (ended ${labelMaturityDays}+ days ago)`, href: link([["from", day(matureEnd - 27 * DAY_MS)], ["to", day(matureEnd)]]) },
  ];
  const issueFor = (name: string) => issues.filter((issue) => issue.path === name || issue.path.startsWith(`${name}.`)).map((issue) => issue.message);
  const field = (name: string, caption: string, input: ReactNode) => (
    <label className="flex flex-col gap-1 text-xs font-semibold text-ink-soft" htmlFor={`mw-${name}`}>
      {caption}
      {input}
      {issueFor(name).map((message) => (
        <span key={message} id={`mw-${name}-error`} className="font-normal text-overdue">
          {message}
        </span>
      ))}
    </label>
  );
  const invalid = (name: string) => (issueFor(name).length > 0 ? { "aria-invalid": true, "aria-describedby": `mw-${name}-error` } : {});
  // A date input can only hold a real calendar day; anything else stays as text so it can be corrected.
  const dateType = (name: string) => ((values[name] ?? "") === "" || (DAY.test(values[name]) && issueFor(name).length === 0) ? "date" : "text");
  const dateField = (name: string, caption: string) =>
    field(name, caption, <input id={`mw-${name}`} type={dateType(name)} name={name} defaultValue={values[name] ?? ""} placeholder="YYYY-MM-DD" className="field" {...invalid(name)} />);

  return (
    <form method="get" action={action} aria-label={label} className="panel space-y-3 p-3">
      {issues.length > 0 ? (
        <p role="alert" className="text-sm text-overdue">
          Nothing is shown until the window is corrected: {issues.map((issue) => `${issue.path || "window"}: ${issue.message}`).join("; ")}.
        </p>
      ) : null}
      <div className="flex flex-wrap items-end gap-3">
        {field(
          "window",
          "Window",
          <select id="mw-window" name="window" defaultValue={values.window ?? "custom"} className="field" {...invalid("window")}>
            <option value="custom">Range of days</option>
            <option value="day">One day</option>
            <option value="week">One week (Mon–Sun)</option>
          </select>,
        )}
        {dateField("date", "Day (one day or week)")}
        {dateField("from", "From (range)")}
        {dateField("to", "To, included (range)")}
        {showBucket && field(
          "bucket",
          "Series step",
          <select id="mw-bucket" name="bucket" defaultValue={values.bucket ?? ""} className="field" {...invalid("bucket")}>
            <option value="">Automatic</option>
            <option value="day">Day</option>
            <option value="week">Week</option>
          </select>,
        )}
        {children}
        <button type="submit" className="btn btn-primary">
          Show
        </button>
      </div>
      <p className="flex flex-wrap gap-x-4 gap-y-1 text-xs">
        <span className="text-ink-soft">Quick windows:</span>
        {quick.map((entry) => (
          <Link key={entry.label} href={entry.href} className="text-accent underline">
            {entry.label}
          </Link>
        ))}
      </p>
      <p className="text-xs text-ink-soft">Days are UTC. Empty fields take their defaults: the last 28 days, today included.</p>
    </form>
  );
}

/** What the window covers, and whether its labels can still change. */
export function WindowSummary({ window, what }: { window: { from: string; to: string; mature: boolean; matureBefore: string; labelMaturityDays: number }; what: string }) {
  const first = window.from.slice(0, 10);
  const last = new Date(new Date(window.to).getTime() - DAY_MS).toISOString().slice(0, 10);
  return window.mature ? (
    <p className="text-sm text-ink-soft">
      {what} from {first} to {last} (UTC). Labels are mature: the window ended at least {window.labelMaturityDays} days ago.
    </p>
  ) : (
    <p role="note" className="rounded border border-attention/40 bg-attention-wash px-3 py-2 text-sm text-attention">
      {what} from {first} to {last} (UTC). <strong>Labels are not mature yet:</strong> chargebacks and customer reports for these alerts can
      arrive for up to {window.labelMaturityDays} days, so precision, calibration and false clears will still change. Windows that ended
      before {window.matureBefore.slice(0, 10)} are mature.
    </p>
  );
}

/** The first value of each query parameter, as the reader typed it. */
export function formValues(raw: Record<string, string | string[] | undefined>): Record<string, string> {
  return Object.fromEntries(Object.entries(raw).flatMap(([key, value]) => {
    const first = Array.isArray(value) ? value[0] : value;
    return first === undefined ? [] : [[key, first]];
  }));
}
