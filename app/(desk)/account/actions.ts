"use server";
import { db } from "@/lib/db/client";
import { formAction } from "@/lib/http/server-action";
import { changeOwnPasswordInputSchema } from "@/lib/auth/schemas";
import { changeOwnPassword } from "@/lib/users/change-own-password";

export const changeOwnPasswordAction = formAction(
  "app/(desk)/account/actions.ts#changeOwnPasswordAction",
  changeOwnPasswordInputSchema,
  async (input, { user, context, now }) => {
    const result = await changeOwnPassword(db(), { actor: user, ...input, now, context: { requestId: context.requestId, ipAddress: context.ipAddress } });
    const others = result.endedOtherSessions;
    return { message: `Password changed.${others > 0 ? ` ${others} other session(s) were signed out.` : ""}` };
  },
);
