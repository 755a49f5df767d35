import { assertCount } from "./input-checks";
import { rate, type Rate } from "./rate";

/**
 * False-clear rate of a reviewer: of the alerts they closed `legitimate`, the share that a later
 * `chargeback` or `customer_report` label showed to be fraud. The window must be mature (labels
 * arrive months late) before this is read as final; the caller says which windows are not.
 */
export function falseClearRate(counts: { falseClears: number; clearedLegitimate: number }): Rate {
  const { falseClears, clearedLegitimate } = counts;
  assertCount(falseClears, "falseClears");
  assertCount(clearedLegitimate, "clearedLegitimate");
  if (falseClears > clearedLegitimate) {
    throw new RangeError(
      `falseClears (${falseClears}) cannot exceed clearedLegitimate (${clearedLegitimate}): ` +
        "a false clear is a cleared alert that later proved to be fraud",
    );
  }
  return rate(falseClears, clearedLegitimate);
}
