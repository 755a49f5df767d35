import type { Settings } from "@/lib/settings/schemas";

/** Expected analyst minutes for an alert of this channel: the channel's own figure, or the usual one. */
export function expectedHandlingMinutesFor(queue: Pick<Settings["queue"], "expectedHandlingMinutes" | "handlingMinutesByChannel">, channel: string): number {
  return queue.handlingMinutesByChannel[channel] ?? queue.expectedHandlingMinutes;
}
