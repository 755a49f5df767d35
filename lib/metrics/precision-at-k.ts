import { assertFinite, assertPositiveInteger } from "./input-checks";

export type AlertOfDay = {
  /** The queue priority the alert arrived with (expected loss or score, whichever the team uses). */
  priority: number;
  /** Confirmed as fraud by review or a later fraud label. */
  isFraud: boolean;
};

export type PrecisionAtK = {
  /** Share of fraud among the `considered` top alerts; null when the day had no alerts. */
  value: number | null;
  k: number;
  /** min(k, alerts that day). Less than k means the day had fewer alerts than k. */
  considered: number;
};

/**
 * Alert precision P_k for one day: among the k alerts with the highest priority that arrived that
 * day, the share confirmed as fraud (Dal Pozzolo et al. 2018, IEEE TNNLS, "alert precision"; the
 * same quantity as precision top-k in Le Borgne et al.'s handbook). It answers the question a team
 * with capacity k asks: "of what we could review, how much was fraud?"
 *
 * When a day has fewer than k alerts we divide by the number available, not by k (the handbook
 * divides by k): a quiet day should not look like a bad model. `considered` tells the reader so.
 *
 * Ties in priority are broken by input order (the sort is stable), so the caller decides how ties
 * fall by the order it passes, e.g. oldest first as in the queue.
 */
export function precisionAtK(alertsOfDay: readonly AlertOfDay[], k: number): PrecisionAtK {
  assertPositiveInteger(k, "k");
  alertsOfDay.forEach((a, i) => assertFinite(a.priority, `alertsOfDay[${i}].priority`));

  // Array.prototype.sort is stable since ES2019, which is what the tie rule above relies on.
  const top = [...alertsOfDay].sort((a, b) => b.priority - a.priority).slice(0, k);
  const considered = top.length;
  if (considered === 0) return { value: null, k, considered };
  const fraud = top.filter((a) => a.isFraud).length;
  return { value: fraud / considered, k, considered };
}
