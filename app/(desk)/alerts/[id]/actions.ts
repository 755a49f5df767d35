"use server";
import { after } from "next/server";
import { revalidatePath } from "next/cache";
import { redirect } from "next/navigation";
import { z } from "zod";
import { db } from "@/lib/db/client";
import { formAction } from "@/lib/http/server-action";
import { claimAlert } from "@/lib/queue/claim-alert";
import { releaseAlert } from "@/lib/queue/release-alert";
import { recordOutcome } from "@/lib/outcomes/record-outcome";
import { recordSecondReview } from "@/lib/outcomes/record-second-review";
import { firstOutcomeFormSchema, outcomeLabels, secondReviewFormSchema } from "@/lib/outcomes/schemas";
import { utcMinute } from "@/lib/outcomes/outcome-rows";

const audit = (context: { requestId: string; ipAddress: string }) => ({ requestId: context.requestId, ipAddress: context.ipAddress });
const alertIdSchema = z.object({ alertId: z.string().uuid({ error: "not an alert id" }) });
// The refit after a closing runs once the answer is on its way (Next's after()), not while the analyst waits.
const afterResponse = (task: () => Promise<void>) => after(task);

function refresh(alertId: string): void {
  revalidatePath(`/alerts/${alertId}`);
  revalidatePath("/queue");
}

export const claimAlertAction = formAction("app/(desk)/alerts/[id]/actions.ts#claimAlertAction", alertIdSchema, async (input, { user, context, now }) => {
  const claimed = await claimAlert(db(), { actor: user, alertId: input.alertId, now, context: audit(context) });
  refresh(input.alertId);
  return { message: `You hold this alert until ${utcMinute(claimed.leaseExpiresAt!)}.` };
});

export const releaseAlertAction = formAction("app/(desk)/alerts/[id]/actions.ts#releaseAlertAction", alertIdSchema, async (input, { user, context, now }) => {
  await releaseAlert(db(), { actor: user, alertId: input.alertId, now, reason: "released by hand", context: audit(context) });
  refresh(input.alertId);
  redirect("/queue");
});

export const recordOutcomeAction = formAction(
  "app/(desk)/alerts/[id]/actions.ts#recordOutcomeAction",
  firstOutcomeFormSchema,
  async (input, { user, context, now }) => {
    const result = await recordOutcome(db(), { actor: user, ...input, now, context: audit(context), afterCommit: afterResponse });
    refresh(input.alertId);
    const recorded = `“${outcomeLabels[result.outcome]}” (${result.reason})`;
    if (result.repeated) return { message: `${recorded} was already recorded at ${utcMinute(result.closedAt)}; nothing new was saved.` };
    return {
      message:
        result.alertState === "second_review"
          ? `Recorded ${recorded}. Under the four-eyes rule the alert now waits for a second person.`
          : `Recorded ${recorded}. The alert is closed.`,
    };
  },
  { keep: ["outcome", "reason", "note"] },
);

export const recordSecondReviewAction = formAction(
  "app/(desk)/alerts/[id]/actions.ts#recordSecondReviewAction",
  secondReviewFormSchema,
  async (input, { user, context, now }) => {
    const result = await recordSecondReview(db(), { actor: user, ...input, now, context: audit(context), afterCommit: afterResponse });
    refresh(input.alertId);
    if (result.repeated) return { message: `Your second review was already recorded at ${utcMinute(result.closedAt)}; nothing new was saved.` };
    return {
      message: `Second review recorded: you ${result.decision} the first outcome. The alert is closed as “${outcomeLabels[result.outcome]}”.`,
    };
  },
  { keep: ["outcome", "reason", "note"] },
);
