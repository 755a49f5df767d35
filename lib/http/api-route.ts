// The one wrapper of every app/api/v1 route handler:
//   export const GET = apiRoute("GET /api/v1/whoami", async (request, { actor, params, context }) => …);
// It assigns a request id, authenticates (an API client's bearer token, or a signed-in person's
// session cookie), decides access from the route's registry entry, records refusals, and turns
// errors into JSON: AppError → its status; anything else → a generic 500 that names the request id
// and is logged on the server, never a stack or SQL text (OWASP ASVS 5.0 §16.5.1; §4.1 API
// security; §16.3.2 refused access logged; from memory).
import "server-only";
import { NextResponse, type NextRequest } from "next/server";
import { db } from "@/lib/db/client";
import { AppError, httpStatusOf, isAppError, type FieldIssue } from "@/lib/errors";
import { recordStandaloneAuditEvent } from "@/lib/audit/record-audit-event";
import type { ApiClientActor, UserActor } from "@/lib/auth/actor";
import { SESSION_COOKIE } from "@/lib/auth/session-cookie";
import { validateSession } from "@/lib/auth/validate-session";
import { authenticateApiToken } from "@/lib/api-clients/authenticate-api-token";
import { decideApiAccess, type Principal } from "@/lib/http/route-access";
import { apiRouteAccess, type ApiRouteKey } from "@/lib/http/route-registry";
import { REQUEST_ID_HEADER, requestContextOf, type RequestContext } from "@/lib/http/request-context";

export interface ApiHandlerContext<Params> {
  actor: UserActor | ApiClientActor;
  params: Params;
  /** Request id, client address and user agent; pass `context` on to lib functions for their audit events. */
  context: RequestContext;
  now: Date;
}

export type ApiHandler<Params> = (request: NextRequest, context: ApiHandlerContext<Params>) => Promise<Response | object>;

/** What Next passes a route handler as its second argument. */
export interface RouteSegment<Params> {
  params: Promise<Params>;
}

export interface ErrorBody {
  error: { code: string; message: string; requestId: string; issues?: FieldIssue[] };
}

function errorResponse(status: number, code: string, message: string, requestId: string, issues?: FieldIssue[]): NextResponse<ErrorBody> {
  const response = NextResponse.json<ErrorBody>({ error: { code, message, requestId, ...(issues?.length ? { issues } : {}) } }, { status });
  if (status === 401) response.headers.set("WWW-Authenticate", 'Bearer realm="triage-desk"');
  return response;
}

function cookieValue(request: Request, name: string): string | null {
  for (const part of (request.headers.get("cookie") ?? "").split(";")) {
    const [key, ...rest] = part.trim().split("=");
    if (key === name) return rest.join("=");
  }
  return null;
}

type Authentication =
  | { kind: "ok"; actor: UserActor | ApiClientActor }
  | { kind: "none" }
  | { kind: "refused"; reason: "malformed_authorization" | "unknown_token" | "revoked_token" | "session_ended"; message: string; clientId?: string; clientName?: string };

async function authenticate(request: Request, now: Date, context: RequestContext): Promise<Authentication> {
  const authorization = request.headers.get("authorization");
  if (authorization !== null) {
    const match = /^Bearer\s+(\S+)\s*$/i.exec(authorization);
    if (!match) return { kind: "refused", reason: "malformed_authorization", message: "The Authorization header must be `Bearer <token>`." };
    const check = await authenticateApiToken(db(), { token: match[1], now });
    if (check.status === "unknown") return { kind: "refused", reason: "unknown_token", message: "The API token is not known." };
    if (check.status === "revoked") {
      return { kind: "refused", reason: "revoked_token", message: "The API token was revoked.", clientId: check.clientId, clientName: check.name };
    }
    return { kind: "ok", actor: check.actor };
  }
  const token = cookieValue(request, SESSION_COOKIE);
  if (token) {
    const session = await validateSession(db(), { token, now, context });
    if (!session) return { kind: "refused", reason: "session_ended", message: "Your session has ended. Sign in again." };
    return { kind: "ok", actor: session.user };
  }
  return { kind: "none" };
}

function principalOf(authentication: Authentication): Principal {
  if (authentication.kind !== "ok") return { type: "none" };
  const actor = authentication.actor;
  return actor.type === "user" ? { type: "user", role: actor.role } : { type: "api_client", scopes: actor.scopes };
}

/** A cookie-authenticated request that changes state must come from our own pages (SameSite=Lax
 * already keeps the cookie off cross-site POSTs; this is the second check; OWASP ASVS 5.0 §3.5.1,
 * from memory). Bearer tokens are not sent by browsers on their own, so they need no such check. */
function crossSiteWithCookie(request: Request, actor: UserActor | ApiClientActor): boolean {
  if (actor.type !== "user" || ["GET", "HEAD", "OPTIONS"].includes(request.method)) return false;
  const origin = request.headers.get("origin");
  if (!origin) return request.headers.get("sec-fetch-site") === "cross-site";
  const host = request.headers.get("x-forwarded-host") ?? request.headers.get("host");
  try {
    return new URL(origin).host !== host;
  } catch {
    return true;
  }
}

async function recordRefusal(key: ApiRouteKey, authentication: Authentication, reason: string, context: RequestContext): Promise<void> {
  try {
    if (authentication.kind === "ok" && authentication.actor.type === "user") {
      const user = authentication.actor;
      const permission = apiRouteAccess[key].permission ?? "(API token only)";
      await recordStandaloneAuditEvent(db(), {
        actor: { type: "user", id: user.id, label: user.email },
        event: { action: "user.refused", payload: { permission, target: key } },
        subject: { type: "user", id: user.id },
        context,
      });
      return;
    }
    const client =
      authentication.kind === "ok" && authentication.actor.type === "api_client"
        ? { id: authentication.actor.id, name: authentication.actor.name }
        : authentication.kind === "refused" && authentication.clientId
          ? { id: authentication.clientId, name: authentication.clientName ?? "unknown" }
          : null;
    await recordStandaloneAuditEvent(db(), {
      actor: client ? { type: "api_client", id: client.id, label: `api:${client.name}` } : { type: "system", id: null, label: "anonymous" },
      event: { action: "api_client.refused", payload: { reason, path: key } },
      subject: client ? { type: "api_client", id: client.id } : null,
      context,
    });
  } catch (error) {
    // A refusal must still be answered when the audit write fails; the log keeps the trace.
    console.error(`[${context.requestId}] could not record a refused call to ${key}:`, error);
  }
}

export function apiRoute<Params extends Record<string, string | string[]> = Record<string, never>>(
  key: ApiRouteKey,
  handler: ApiHandler<Params>,
): (request: NextRequest, segment: RouteSegment<Params>) => Promise<Response> {
  const access = apiRouteAccess[key];
  if (!access) throw new Error(`apiRoute: "${key}" has no entry in lib/http/route-registry.ts`);
  return async (request, segment) => {
    const context = requestContextOf(request.headers);
    const { requestId } = context;
    const now = new Date();
    let response: Response;
    try {
      const authentication = await authenticate(request, now, context);
      if (authentication.kind === "refused") {
        await recordRefusal(key, authentication, authentication.reason, context);
        response = errorResponse(401, "unauthenticated", authentication.message, requestId);
      } else {
        const decision = decideApiAccess(access, principalOf(authentication));
        if (!decision.allowed) {
          const reason = authentication.kind === "none" ? "missing_credentials" : decision.message;
          await recordRefusal(key, authentication, reason, context);
          response = errorResponse(decision.status, decision.code, decision.message, requestId);
        } else if (authentication.kind === "ok" && crossSiteWithCookie(request, authentication.actor)) {
          await recordRefusal(key, authentication, "cross_site_request", context);
          response = errorResponse(403, "forbidden", "Requests that change data must come from Triage Desk's own pages.", requestId);
        } else {
          const actor = (authentication as { kind: "ok"; actor: UserActor | ApiClientActor }).actor;
          const params = segment?.params ? await segment.params : ({} as Params);
          const result = await handler(request, { actor, params, context, now });
          response = result instanceof Response ? result : NextResponse.json(result);
        }
      }
    } catch (error) {
      if (isAppError(error)) {
        response = errorResponse(httpStatusOf(error.code), error.code, error.message, requestId, error.issues);
      } else {
        console.error(`[${requestId}] ${key} failed:`, error);
        response = errorResponse(500, "internal", `Something went wrong on our side. If it happens again, report request id ${requestId}.`, requestId);
      }
    }
    try {
      response.headers.set(REQUEST_ID_HEADER, requestId);
    } catch {
      // Some responses (Response.redirect, a fetched response) have immutable headers.
      response = new Response(response.body, response);
      response.headers.set(REQUEST_ID_HEADER, requestId);
    }
    if (!response.headers.has("cache-control")) response.headers.set("cache-control", "no-store");
    return response;
  };
}

/** For handlers: the request body as JSON, or a 400 that says so. */
export async function readJsonBody(request: Request): Promise<unknown> {
  try {
    return await request.json();
  } catch {
    throw new AppError("invalid_input", "The request body is not valid JSON.");
  }
}
