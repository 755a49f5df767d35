"use server";
import { redirect } from "next/navigation";
import { z } from "zod";
import { db, pool } from "@/lib/db/client";
import { formAction } from "@/lib/http/server-action";
import { claimNextAlert } from "@/lib/queue/claim-next-alert";

const audit = (context: { requestId: string; ipAddress: string }) => ({ requestId: context.requestId, ipAddress: context.ipAddress });

/** "Take next": the analyst gets the alert the queue puts first and lands on its page. */
export const takeNextAction = formAction("app/(desk)/queue/actions.ts#takeNextAction", z.object({}), async (_input, { user, context, now }) => {
  const claimed = await claimNextAlert({ prisma: db(), pool: pool() }, { actor: user, now, context: audit(context) });
  if (!claimed) return { message: "No alert is waiting right now. The queue fills again as new alerts arrive." };
  redirect(`/alerts/${claimed.id}`);
});
