import { assertFinite, assertNonNegative, assertValidDate } from "./argument-checks";

/** Alerts whose expected loss is at least `minExpectedLossMinor` (and below the next band) are due within `slaHours`. */
export interface SlaBand {
  minExpectedLossMinor: number;
  slaHours: number;
}

const MILLISECONDS_PER_HOUR = 3_600_000;

/**
 * Throws a RangeError unless the bands cover every expected loss exactly once: at least one band,
 * exactly one starting at 0 (so that EL = 0 has a band), no two with the same start (which one
 * would apply?), and a positive, finite number of hours each.
 */
export function assertSlaBands(bands: readonly SlaBand[]): void {
  if (!Array.isArray(bands) || bands.length === 0) {
    throw new RangeError("SLA bands must be a non-empty list");
  }
  const starts = new Set<number>();
  bands.forEach((band, i) => {
    assertNonNegative(band.minExpectedLossMinor, `bands[${i}].minExpectedLossMinor`);
    assertFinite(band.slaHours, `bands[${i}].slaHours`);
    if (band.slaHours <= 0) {
      throw new RangeError(`bands[${i}].slaHours must be > 0, got ${band.slaHours}`);
    }
    if (starts.has(band.minExpectedLossMinor)) {
      throw new RangeError(`two SLA bands start at the same expected loss ${band.minExpectedLossMinor}`);
    }
    starts.add(band.minExpectedLossMinor);
  });
  if (!starts.has(0)) {
    throw new RangeError("one SLA band must start at an expected loss of 0");
  }
}

/** SLA hours of the band with the greatest minimum that does not exceed the expected loss. */
export function slaHoursForExpectedLoss({
  expectedLossMinor,
  bands,
}: {
  expectedLossMinor: number;
  bands: readonly SlaBand[];
}): number {
  assertSlaBands(bands);
  assertNonNegative(expectedLossMinor, "expectedLossMinor");
  let chosen: SlaBand | undefined;
  for (const band of bands) {
    if (band.minExpectedLossMinor <= expectedLossMinor && (chosen === undefined || band.minExpectedLossMinor > chosen.minExpectedLossMinor)) {
      chosen = band;
    }
  }
  if (chosen === undefined) {
    // Unreachable after assertSlaBands (a band starts at 0 and EL >= 0); kept so a broken invariant is loud.
    throw new RangeError(`no SLA band applies to expected loss ${expectedLossMinor}`);
  }
  return chosen.slaHours;
}

/**
 * Due time = arrival + SLA hours of the alert's expected-loss band (DESIGN.md §4, Queue order).
 * Hours may be fractional; the offset is rounded to the whole millisecond a Date can hold, so the
 * same inputs always give the same stored timestamp.
 */
export function dueAt({
  arrivedAt,
  expectedLossMinor,
  bands,
}: {
  arrivedAt: Date;
  expectedLossMinor: number;
  bands: readonly SlaBand[];
}): Date {
  assertValidDate(arrivedAt, "arrivedAt");
  const hours = slaHoursForExpectedLoss({ expectedLossMinor, bands });
  return new Date(arrivedAt.getTime() + Math.round(hours * MILLISECONDS_PER_HOUR));
}
