"use server";
import { cookies } from "next/headers";
import { redirect } from "next/navigation";
import { db } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { signIn } from "@/lib/auth/sign-in";
import { signInFormSchema } from "@/lib/auth/schemas";
import { SESSION_COOKIE, sessionCookieOptions } from "@/lib/auth/session-cookie";
import { formAction } from "@/lib/http/server-action";
import { safeNextPath } from "@/lib/http/safe-next-path";

export const signInAction = formAction(
  "app/sign-in/actions.ts#signInAction",
  signInFormSchema,
  async (input, { context, now }) => {
    const jar = await cookies();
    const result = await signIn(db(), {
      email: input.email,
      password: input.password,
      ipAddress: context.ipAddress,
      userAgent: context.userAgent,
      now,
      previousSessionToken: jar.get(SESSION_COOKIE)?.value ?? null,
      context: { requestId: context.requestId, ipAddress: context.ipAddress },
    });
    if (!result.ok) throw new AppError(result.reason === "locked" ? "rate_limited" : "unauthenticated", result.message);
    jar.set(SESSION_COOKIE, result.token, sessionCookieOptions(result.expiresAt));
    redirect(safeNextPath(input.next));
  },
  { keep: ["email", "next"] },
);
