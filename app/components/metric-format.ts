// Display of the feedback-loop numbers: rates with their interval and counts, ratios, durations.
import type { Rate } from "@/lib/metrics";

export function formatPercent(value: number | null, digits = 1): string {
  return value === null ? "—" : `${(value * 100).toFixed(digits)}%`;
}

/** "39.7–89.2%": the 95% Wilson interval of a rate. */
export function formatInterval(rate: Pick<Rate, "lower" | "upper" | "trials">): string {
  return rate.trials === 0 ? "no cases" : `${(rate.lower * 100).toFixed(1)}–${(rate.upper * 100).toFixed(1)}%`;
}

/** "7 of 10". */
export function formatCounts(rate: Pick<Rate, "successes" | "trials">): string {
  return `${rate.successes.toLocaleString("en")} of ${rate.trials.toLocaleString("en")}`;
}

export function formatDecimal(value: number | null, digits = 3): string {
  return value === null ? "—" : value.toFixed(digits);
}

export function formatCount(value: number): string {
  return value.toLocaleString("en");
}

/** Handling times are minutes long: "5 min 30 s". */
export function formatSeconds(seconds: number | null): string {
  if (seconds === null) return "—";
  const whole = Math.round(seconds);
  const minutes = Math.floor(whole / 60);
  const rest = whole % 60;
  if (minutes === 0) return `${rest} s`;
  if (minutes < 60) return rest === 0 ? `${minutes} min` : `${minutes} min ${rest} s`;
  return `${Math.floor(minutes / 60)} h ${minutes % 60} min`;
}

/** "2026-07-06" from an ISO instant at UTC midnight; an exclusive end shows as the day before. */
export function formatDay(iso: string, exclusiveEnd = false): string {
  const time = new Date(iso).getTime() - (exclusiveEnd ? 86_400_000 : 0);
  return new Date(time).toISOString().slice(0, 10);
}
