import type { Rate } from "@/lib/metrics";

/**
 * Where a reviewer's rate lies against the team's: "above" or "below" only when the whole 95% Wilson
 * interval is beyond the team's point value, so that a reviewer with a handful of alerts does not
 * stand out on chance alone. Null with no trials on either side.
 */
export function standsOut(reviewer: Rate, team: Rate): "above" | "below" | null {
  if (reviewer.trials === 0 || team.value === null) return null;
  if (reviewer.lower > team.value) return "above";
  if (reviewer.upper < team.value) return "below";
  return null;
}
