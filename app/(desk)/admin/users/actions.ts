"use server";
import { revalidatePath } from "next/cache";
import { db } from "@/lib/db/client";
import { formAction } from "@/lib/http/server-action";
import { createUser } from "@/lib/users/create-user";
import { changeRole } from "@/lib/users/change-role";
import { deactivateUser } from "@/lib/users/deactivate-user";
import { reactivateUser } from "@/lib/users/reactivate-user";
import { changeRoleInputSchema, createUserInputSchema, userIdInputSchema } from "@/lib/users/schemas";

const audit = (context: { requestId: string; ipAddress: string }) => ({ requestId: context.requestId, ipAddress: context.ipAddress });

export const createUserAction = formAction(
  "app/(desk)/admin/users/actions.ts#createUserAction",
  createUserInputSchema,
  async (input, { user, context, now }) => {
    const created = await createUser(db(), { actor: user, ...input, now, context: audit(context) });
    revalidatePath("/admin/users");
    return { message: `Created ${created.displayName} (${created.email}) as ${created.role}. Give them the initial password in person or by another channel than this email.` };
  },
  { keep: ["email", "displayName", "role"] },
);

export const changeRoleAction = formAction("app/(desk)/admin/users/actions.ts#changeRoleAction", changeRoleInputSchema, async (input, { user, context, now }) => {
  const result = await changeRole(db(), { actor: user, userId: input.userId, role: input.role, now, context: audit(context) });
  revalidatePath("/admin/users");
  return { message: result.changed ? `Role changed from ${result.from} to ${result.to}.` : `The role was already ${result.to}.` };
});

export const deactivateUserAction = formAction("app/(desk)/admin/users/actions.ts#deactivateUserAction", userIdInputSchema, async (input, { user, context, now }) => {
  const result = await deactivateUser(db(), { actor: user, userId: input.userId, now, context: audit(context) });
  revalidatePath("/admin/users");
  return { message: result.alreadyInactive ? "Already deactivated." : `Deactivated; ${result.endedSessions} open session(s) ended.` };
});

export const reactivateUserAction = formAction("app/(desk)/admin/users/actions.ts#reactivateUserAction", userIdInputSchema, async (input, { user, context, now }) => {
  const result = await reactivateUser(db(), { actor: user, userId: input.userId, now, context: audit(context) });
  revalidatePath("/admin/users");
  return { message: result.alreadyActive ? "Already active." : "Reactivated: they can sign in again with their password." };
});
