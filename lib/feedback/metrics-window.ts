// The time window of a metric and its buckets, resolved from the query and the clock passed in.
// Everything is in UTC days so that a window means the same to every reader whatever their zone.
import { AppError } from "@/lib/errors";
import { MAX_WINDOW_DAYS, type MetricsWindowJson, type WindowQuery } from "@/lib/feedback/schemas";

export const DAY_MS = 86_400_000;

export interface MetricsWindow {
  kind: WindowQuery["window"];
  from: Date;
  to: Date;
  days: number;
  bucket: "day" | "week";
  labelMaturityDays: number;
  matureBefore: Date;
  mature: boolean;
}

export interface Bucket {
  index: number;
  from: Date;
  to: Date;
  mature: boolean;
}

function utcMidnight(date: Date): Date {
  return new Date(Date.UTC(date.getUTCFullYear(), date.getUTCMonth(), date.getUTCDate()));
}

function dayOf(text: string): Date {
  return new Date(`${text}T00:00:00Z`);
}

/**
 * Labels are mature for a window when its end is at least `labelMaturityDays` before now: disputes
 * and customer reports for its alerts have had the agreed time to arrive.
 */
export function isMature(end: Date, matureBefore: Date): boolean {
  return end.getTime() <= matureBefore.getTime();
}

export function resolveMetricsWindow(query: WindowQuery, options: { now: Date; labelMaturityDays: number }): MetricsWindow {
  const today = utcMidnight(options.now);
  let from: Date;
  let to: Date;
  switch (query.window) {
    case "day": {
      from = query.date ? dayOf(query.date) : today;
      to = new Date(from.getTime() + DAY_MS);
      break;
    }
    case "week": {
      const anchor = query.date ? dayOf(query.date) : today;
      // ISO weeks start on Monday: getUTCDay() is 0 for Sunday, so Sunday goes back 6 days.
      const back = (anchor.getUTCDay() + 6) % 7;
      from = new Date(anchor.getTime() - back * DAY_MS);
      to = new Date(from.getTime() + 7 * DAY_MS);
      break;
    }
    case "custom": {
      const last = query.to ? dayOf(query.to) : today;
      from = query.from ? dayOf(query.from) : new Date(last.getTime() - 27 * DAY_MS);
      to = new Date(last.getTime() + DAY_MS);
      break;
    }
  }
  const days = Math.round((to.getTime() - from.getTime()) / DAY_MS);
  if (days > MAX_WINDOW_DAYS) {
    throw new AppError("invalid_input", `The window is ${days} days long; at most ${MAX_WINDOW_DAYS} are allowed.`, [
      { path: "from", message: `the window from..to must span at most ${MAX_WINDOW_DAYS} days` },
    ]);
  }
  const matureBefore = new Date(options.now.getTime() - options.labelMaturityDays * DAY_MS);
  return {
    kind: query.window,
    from,
    to,
    days,
    bucket: query.bucket ?? (days <= 62 ? "day" : "week"),
    labelMaturityDays: options.labelMaturityDays,
    matureBefore,
    mature: isMature(to, matureBefore),
  };
}

/** Consecutive buckets from the window's start; the last one is cut at the window's end. */
export function bucketsOf(window: Pick<MetricsWindow, "from" | "to" | "matureBefore">, step: "day" | "week"): Bucket[] {
  const stepMs = (step === "day" ? 1 : 7) * DAY_MS;
  const buckets: Bucket[] = [];
  for (let start = window.from.getTime(), index = 0; start < window.to.getTime(); start += stepMs, index += 1) {
    const to = new Date(Math.min(start + stepMs, window.to.getTime()));
    buckets.push({ index, from: new Date(start), to, mature: isMature(to, window.matureBefore) });
  }
  return buckets;
}

export function bucketSeconds(step: "day" | "week"): number {
  return (step === "day" ? 1 : 7) * 86_400;
}

export function windowJson(window: MetricsWindow): MetricsWindowJson {
  return {
    kind: window.kind,
    from: window.from.toISOString(),
    to: window.to.toISOString(),
    days: window.days,
    bucket: window.bucket,
    labelMaturityDays: window.labelMaturityDays,
    matureBefore: window.matureBefore.toISOString(),
    mature: window.mature,
  };
}
