import { assertNonNegative, assertPositive } from "./argument-checks";

/**
 * How a team orders its queue after overdue alerts: by expected loss, or by expected loss per
 * expected handling minute (Smith's rule).
 */
export type QueueOrderMode = "expected_loss" | "loss_per_minute";

export const QUEUE_ORDER_MODES: readonly QueueOrderMode[] = ["expected_loss", "loss_per_minute"];

export interface PriorityInput {
  /** Expected loss in minor units, full precision. */
  expectedLossMinor: number;
  /** Expected analyst minutes for the alert; must be > 0 in both modes, a zero estimate is a data error. */
  expectedHandlingMinutes: number;
  orderMode: QueueOrderMode;
}

/**
 * The number the queue sorts on, highest first.
 *
 * `loss_per_minute` is Smith's ratio rule (Smith 1956, weighted shortest processing time): working
 * jobs in decreasing weight ÷ processing time minimises the total weighted completion time on one
 * machine. With EL as the weight, that minimises the money left exposed while alerts wait, which
 * plain EL order does not when handling times differ.
 */
export function priorityValue({ expectedLossMinor, expectedHandlingMinutes, orderMode }: PriorityInput): number {
  assertNonNegative(expectedLossMinor, "expectedLossMinor");
  assertPositive(expectedHandlingMinutes, "expectedHandlingMinutes");
  switch (orderMode) {
    case "expected_loss":
      return expectedLossMinor;
    case "loss_per_minute":
      return expectedLossMinor / expectedHandlingMinutes;
    default:
      throw new RangeError(`orderMode must be one of ${QUEUE_ORDER_MODES.join(", ")}, got ${String(orderMode)}`);
  }
}
