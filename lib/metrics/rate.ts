import { assertCount } from "./input-checks";
import { wilsonInterval } from "./wilson-interval";

/**
 * The one shape every rate takes in the API and on screen: the point value with its 95% Wilson
 * interval and the counts behind it, so no reader sees "100%" without seeing it was 2 of 2.
 * `value` is null when there were no trials (the interval is then the whole of [0, 1]).
 */
export type Rate = {
  value: number | null;
  lower: number;
  upper: number;
  successes: number;
  trials: number;
};

export function rate(successes: number, trials: number): Rate {
  const { lower, upper } = wilsonInterval(successes, trials);
  return { value: trials === 0 ? null : successes / trials, lower, upper, successes, trials };
}

export type RealizedPrecision = Rate & { inconclusive: number };

/**
 * Realized precision of a model version (or alert-hit rate of a reviewer): F / (F + L).
 * Inconclusive outcomes are neither fraud nor legitimate; counting them on either side would bias
 * the rate, so they are left out of it and reported beside it.
 */
export function realizedPrecision(counts: {
  confirmedFraud: number;
  legitimate: number;
  inconclusive: number;
}): RealizedPrecision {
  const { confirmedFraud, legitimate, inconclusive } = counts;
  assertCount(confirmedFraud, "confirmedFraud");
  assertCount(legitimate, "legitimate");
  assertCount(inconclusive, "inconclusive");
  return { ...rate(confirmedFraud, confirmedFraud + legitimate), inconclusive };
}
