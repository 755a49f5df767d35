// Who may call what: the decision for API routes and server actions, from the registry entry and
// the permission matrix (OWASP ASVS 5.0 §8.2.1 function-level authorization, §8.3.1 enforced on the
// server; from memory). Pure: no database, no request. apiRoute() and the server-action wrappers
// call it; tests/auth/route-permissions.test.ts proves it agrees with the matrix for every entry.
import { can, type ApiScope, type Permission, type Role } from "@/lib/auth/permissions";

export type Principal = { type: "none" } | { type: "user"; role: Role } | { type: "api_client"; scopes: readonly ApiScope[] };

/** An API route's entry. `scope`: API tokens holding it may call ("any": every valid token; absent:
 * tokens are refused). `permission`: signed-in people whose role has it may call (absent: sessions
 * are refused). */
export interface ApiRouteAccess {
  scope?: ApiScope | "any";
  permission?: Permission;
}

/** A server action's entry: the permission it needs, or "public" for sign-in and sign-out. */
export type ServerActionAccess = Permission | "public";

export type AccessDecision = { allowed: true } | { allowed: false; status: 401 | 403; code: "unauthenticated" | "forbidden"; message: string };

const allowed: AccessDecision = { allowed: true };

export function decideApiAccess(access: ApiRouteAccess, principal: Principal): AccessDecision {
  switch (principal.type) {
    case "none":
      return {
        allowed: false,
        status: 401,
        code: "unauthenticated",
        message: access.scope ? "No credentials: send an API token as `Authorization: Bearer <token>`, or sign in." : "Sign in to use this route.",
      };
    case "user":
      if (!access.permission) return { allowed: false, status: 403, code: "forbidden", message: "This route takes an API token, not a signed-in session." };
      return can(principal.role, access.permission)
        ? allowed
        : { allowed: false, status: 403, code: "forbidden", message: `Your role (${principal.role}) does not include the permission "${access.permission}".` };
    case "api_client":
      if (!access.scope) return { allowed: false, status: 403, code: "forbidden", message: "This route is not open to API tokens; it is for signed-in people." };
      if (access.scope === "any" || principal.scopes.includes(access.scope)) return allowed;
      return { allowed: false, status: 403, code: "forbidden", message: `This API token lacks the scope "${access.scope}".` };
  }
}

export function decideActionAccess(access: ServerActionAccess, principal: Principal): AccessDecision {
  if (access === "public") return allowed;
  if (principal.type === "none") return { allowed: false, status: 401, code: "unauthenticated", message: "Your session has ended. Sign in again." };
  if (principal.type === "api_client") return { allowed: false, status: 403, code: "forbidden", message: "Server actions are for signed-in people." };
  return can(principal.role, access)
    ? allowed
    : { allowed: false, status: 403, code: "forbidden", message: `Your role (${principal.role}) may not do this (needs "${access}").` };
}
