"use server";
import { cookies } from "next/headers";
import { redirect } from "next/navigation";
import { db } from "@/lib/db/client";
import { endSession } from "@/lib/auth/end-session";
import { SESSION_COOKIE, sessionCookieOptions } from "@/lib/auth/session-cookie";
import { plainAction } from "@/lib/http/server-action";

// A POST from the desk's sign-out button; nothing changes state through GET.
export const signOutAction = plainAction("app/sign-out/actions.ts#signOutAction", async (_formData, { context, now }) => {
  const jar = await cookies();
  const token = jar.get(SESSION_COOKIE)?.value;
  if (token) await endSession(db(), { session: { token }, reason: "sign_out", now, context: { requestId: context.requestId, ipAddress: context.ipAddress } });
  jar.set(SESSION_COOKIE, "", { ...sessionCookieOptions(new Date(0)), maxAge: 0 });
  redirect("/sign-in");
});
