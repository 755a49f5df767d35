import { assertCount } from "./input-checks";

/** z for a two-sided 95% interval: the 0.975 quantile of the standard normal. */
export const Z_95 = 1.959963984540054;

export type Interval = { lower: number; upper: number };

/**
 * Wilson (1927) score interval for a binomial proportion, without continuity correction
 * (method 3 in Newcombe 1998). Chosen over the textbook Wald interval because reviewer and model
 * rates are often computed on a few dozen alerts, often with 0 or all successes, where Wald
 * collapses to a zero-width interval and Wilson stays honest.
 *
 * With no trials nothing is known, so the interval is the whole of [0, 1].
 */
export function wilsonInterval(successes: number, trials: number, z: number = Z_95): Interval {
  assertCount(successes, "successes");
  assertCount(trials, "trials");
  if (successes > trials) {
    throw new RangeError(`successes (${successes}) cannot exceed trials (${trials})`);
  }
  if (!Number.isFinite(z) || z <= 0) {
    throw new RangeError(`z must be a finite number > 0, got ${z}`);
  }
  if (trials === 0) return { lower: 0, upper: 1 };

  const n = trials;
  const p = successes / n;
  const z2 = z * z;
  const denominator = 1 + z2 / n;
  const centre = (p + z2 / (2 * n)) / denominator;
  const halfWidth = (z / denominator) * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n));
  // At 0 or n successes the bound is exactly 0 or 1 in exact arithmetic; pin it so rounding
  // cannot print "-0.0000" or "1.0000" as something else.
  const lower = successes === 0 ? 0 : Math.max(0, centre - halfWidth);
  const upper = successes === trials ? 1 : Math.min(1, centre + halfWidth);
  return { lower, upper };
}
