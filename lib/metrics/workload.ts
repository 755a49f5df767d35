import { assertCount, assertFiniteValues, assertNonNegative } from "./input-checks";

const MS_PER_HOUR = 3_600_000;

/**
 * Median, e.g. of handling times (claim → close). Preferred to the mean because a few alerts left
 * open over a weekend would otherwise dominate. Null when there is nothing to summarise.
 */
export function median(values: readonly number[]): number | null {
  assertFiniteValues(values, "values");
  if (values.length === 0) return null;
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 === 1 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

/**
 * Hours to clear the backlog = open alerts / (analysts on shift × their recent closing rate).
 * It assumes no new alerts arrive, so it is a lower bound on a busy day. Null when nobody is
 * closing anything (no analysts or a zero rate): the backlog would never clear. An empty backlog
 * takes 0 hours whatever the capacity.
 */
export function timeToClearHours(input: {
  openAlerts: number;
  analystsOnShift: number;
  closingRatePerAnalystPerHour: number;
}): number | null {
  const { openAlerts, analystsOnShift, closingRatePerAnalystPerHour } = input;
  assertCount(openAlerts, "openAlerts");
  assertCount(analystsOnShift, "analystsOnShift");
  assertNonNegative(closingRatePerAnalystPerHour, "closingRatePerAnalystPerHour");
  if (openAlerts === 0) return 0;
  const capacityPerHour = analystsOnShift * closingRatePerAnalystPerHour;
  if (capacityPerHour === 0) return null;
  return openAlerts / capacityPerHour;
}

/**
 * How many open alerts that are not yet past due at `now` will pass their due time within the
 * next `horizonHours`, if the team works them one at a time in due order at `closingRatePerHour`
 * (the whole team's rate). Alerts already past due are not counted (they are the "breaches now"
 * figure) but they are worked first and so use up capacity before the others.
 *
 * The k-th alert in due order (k = 1, 2, …) is closed at now + k / rate; it breaches when that is
 * later than its due time and its due time falls in (now, now + horizon]. Closing exactly at the
 * due time is on time. Due order is used because it is the order that minimises the worst lateness
 * (Jackson 1955, from memory); it does not always minimise the number of late alerts, and the live
 * queue orders by expected loss, so read the result as an estimate, not a bound.
 */
export function projectedBreaches(input: {
  dueTimes: readonly Date[];
  now: Date;
  horizonHours: number;
  closingRatePerHour: number;
  /**
   * Open alerts already past due that `dueTimes` leaves out, given as a count: they come first in
   * due order whatever their exact due times, so only their number matters (a desk with 200,000
   * overdue alerts need not build 200,000 dates).
   */
  pastDueCount?: number;
}): number {
  const { dueTimes, now, horizonHours, closingRatePerHour } = input;
  const pastDueCount = input.pastDueCount ?? 0;
  if (!Number.isInteger(pastDueCount) || pastDueCount < 0) throw new RangeError("pastDueCount must be a whole number ≥ 0");
  const nowMs = now.getTime();
  if (!Number.isFinite(nowMs)) throw new RangeError("now must be a valid date");
  assertNonNegative(horizonHours, "horizonHours");
  assertNonNegative(closingRatePerHour, "closingRatePerHour");
  const dueMs = dueTimes.map((d, i) => {
    const t = d.getTime();
    if (!Number.isFinite(t)) throw new RangeError(`dueTimes[${i}] must be a valid date`);
    return t;
  });

  const horizonEndMs = nowMs + horizonHours * MS_PER_HOUR;
  const inDueOrder = [...dueMs].sort((a, b) => a - b);
  let breaches = 0;
  inDueOrder.forEach((due, index) => {
    if (due <= nowMs || due > horizonEndMs) return;
    // The alert at position index + 1 is still open at its due time when the team cannot close
    // that many alerts by then. Comparing counts avoids dividing by the rate, which may be 0.
    const closableByDue = closingRatePerHour * ((due - nowMs) / MS_PER_HOUR);
    if (pastDueCount + index + 1 > closableByDue) breaches += 1;
  });
  return breaches;
}
