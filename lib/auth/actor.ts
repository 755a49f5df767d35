// Who is acting: a signed-in person or an API client. Domain functions take an Actor so that
// the same function serves a screen, a route handler and a command-line tool.
import type { AuditActor } from "@/lib/audit/schemas";
import type { ApiScope, Role } from "@/lib/auth/permissions";

export interface UserActor {
  type: "user";
  id: string;
  email: string;
  displayName: string;
  role: Role;
  sessionId: string | null;
}

export interface ApiClientActor {
  type: "api_client";
  id: string;
  name: string;
  scopes: ApiScope[];
}

export interface SystemActor {
  type: "system";
  id: null;
  name: string;
}

export type Actor = UserActor | ApiClientActor | SystemActor;

export function auditActorOf(actor: Actor): AuditActor {
  switch (actor.type) {
    case "user":
      return { type: "user", id: actor.id, label: actor.email };
    case "api_client":
      return { type: "api_client", id: actor.id, label: `api:${actor.name}` };
    case "system":
      return { type: "system", id: null, label: actor.name };
  }
}

export const systemActor = (name: string): SystemActor => ({ type: "system", id: null, name });
