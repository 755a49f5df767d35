// The signed-in person of the current request, for server components, server actions and pages.
// Every page asks requirePagePermission() itself: a layout's check does not stop a page from
// rendering (the App Router renders layouts and pages independently).
import "server-only";
import { cache } from "react";
import { cookies, headers } from "next/headers";
import { redirect } from "next/navigation";
import { db } from "@/lib/db/client";
import type { UserActor } from "@/lib/auth/actor";
import { can, type Permission } from "@/lib/auth/permissions";
import { SESSION_COOKIE } from "@/lib/auth/session-cookie";
import { validateSession } from "@/lib/auth/validate-session";
import { recordStandaloneAuditEvent } from "@/lib/audit/record-audit-event";
import { requestContextOf } from "@/lib/http/request-context";
import { signInPathFor } from "@/lib/http/safe-next-path";

/** Set by proxy.ts on every page request: the path and query the browser asked for. */
export const REQUEST_PATH_HEADER = "x-td-path";

/** The person behind the session cookie, or null. Looked up once per request. */
export const getCurrentUser = cache(async (): Promise<UserActor | null> => {
  const token = (await cookies()).get(SESSION_COOKIE)?.value;
  if (!token) return null;
  const context = requestContextOf(await headers());
  const session = await validateSession(db(), { token, now: new Date(), context });
  return session?.user ?? null;
});

export type PageAccess = { allowed: true; user: UserActor } | { allowed: false; user: UserActor; permission: Permission };

/** For server components. Without a session: redirects to /sign-in?next=<this page>. With a role
 * that lacks the permission: records the refusal and returns `allowed: false`, and the page renders
 * <NotAllowed /> (Next's forbidden() still needs an experimental flag in Next 16). */
export async function requirePagePermission(permission: Permission): Promise<PageAccess> {
  const user = await getCurrentUser();
  const requestHeaders = await headers();
  const path = requestHeaders.get(REQUEST_PATH_HEADER);
  if (!user) redirect(signInPathFor(path));
  if (can(user.role, permission)) return { allowed: true, user };
  // OWASP ASVS 5.0 §16.3.2: failed authorization decisions are logged (from memory).
  const context = requestContextOf(requestHeaders);
  await recordStandaloneAuditEvent(db(), {
    actor: { type: "user", id: user.id, label: user.email },
    event: { action: "user.refused", payload: { permission, target: `page ${path ?? "(unknown)"}` } },
    subject: { type: "user", id: user.id },
    context: { requestId: context.requestId, ipAddress: context.ipAddress },
  });
  return { allowed: false, user, permission };
}
