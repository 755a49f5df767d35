"use server";
import { revalidatePath } from "next/cache";
import { db } from "@/lib/db/client";
import { formAction } from "@/lib/http/server-action";
import { releaseAnalystAlerts } from "@/lib/workload/release-analyst-alerts";
import { reassignAlert } from "@/lib/workload/reassign-alert";
import { reassignAlertInputSchema, releaseAnalystAlertsInputSchema } from "@/lib/workload/schemas";

const audit = (context: { requestId: string; ipAddress: string }) => ({ requestId: context.requestId, ipAddress: context.ipAddress });

export const releaseAnalystAlertsAction = formAction(
  "app/(desk)/workload/actions.ts#releaseAnalystAlertsAction",
  releaseAnalystAlertsInputSchema,
  async (input, { user, context, now }) => {
    const result = await releaseAnalystAlerts(db(), { actor: user, analystId: input.analystId, reason: input.reason, now, context: audit(context) });
    revalidatePath("/workload");
    const count = result.released.length;
    return {
      message:
        count === 0
          ? "Nothing to release: they hold no alerts any more."
          : `Released ${count} alert${count === 1 ? "" : "s"} back to the queue (${result.released.map((alert) => alert.externalId).join(", ")}).`,
    };
  },
  { keep: ["reason"] },
);

export const reassignAlertAction = formAction("app/(desk)/workload/actions.ts#reassignAlertAction", reassignAlertInputSchema, async (input, { user, context, now }) => {
  const result = await reassignAlert(db(), { actor: user, alertId: input.alertId, toUserId: input.toUserId, now, context: audit(context) });
  revalidatePath("/workload");
  return {
    message: result.reassigned
      ? `Alert ${result.alert.externalId} moved; the new holder's lease runs until ${result.alert.leaseExpiresAt?.toISOString().slice(11, 16)} UTC.`
      : `Alert ${result.alert.externalId} was already theirs; nothing changed.`,
  };
});
