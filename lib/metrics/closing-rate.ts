import { assertCount, assertNonNegative } from "./input-checks";

const MS_PER_HOUR = 3_600_000;

export interface ClosingRate {
  /** Reviews closed per hour at work. */
  perHour: number;
  /** The hours the rate is measured over. */
  hoursAtWork: number;
}

/**
 * An analyst's recent closing rate, the input of "time to clear" (DESIGN.md §4 Workload): reviews
 * closed in the last `windowHours`, divided by the hours they were at work in that window.
 *
 * Hours at work run from `activeSince` (their first activity in the window: the claim of the first
 * review they closed in it, or of an alert they hold now) to `now`, never starting before the window
 * does. Dividing by the whole window instead would read an analyst who started an hour ago at an
 * eighth of their pace. The hours are at least `minimumHours` (default 1), so two quick closes in the
 * first minutes of a shift do not read as a hundred an hour. No reviews: a rate of 0.
 */
export function closingRate(input: { reviewsClosed: number; activeSince: Date | null; now: Date; windowHours: number; minimumHours?: number }): ClosingRate {
  const { reviewsClosed, activeSince, now, windowHours, minimumHours = 1 } = input;
  assertCount(reviewsClosed, "reviewsClosed");
  assertNonNegative(windowHours, "windowHours");
  assertNonNegative(minimumHours, "minimumHours");
  if (!Number.isFinite(now.getTime())) throw new RangeError("now must be a valid date");
  if (activeSince !== null && !Number.isFinite(activeSince.getTime())) throw new RangeError("activeSince must be a valid date");
  if (minimumHours > windowHours) throw new RangeError(`minimumHours (${minimumHours}) must not exceed windowHours (${windowHours})`);

  const windowStartMs = now.getTime() - windowHours * MS_PER_HOUR;
  const sinceMs = activeSince === null ? windowStartMs : Math.max(windowStartMs, Math.min(activeSince.getTime(), now.getTime()));
  const hoursAtWork = Math.max(minimumHours, (now.getTime() - sinceMs) / MS_PER_HOUR);
  if (reviewsClosed === 0) return { perHour: 0, hoursAtWork };
  return { perHour: reviewsClosed / hoursAtWork, hoursAtWork };
}
