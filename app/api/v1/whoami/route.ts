// GET /api/v1/whoami — whom the credentials belong to: a signed-in person (name, role) or an API client (name, scopes).
import { apiRoute } from "@/lib/http/api-route";

export const GET = apiRoute("GET /api/v1/whoami", async (_request, { actor, context }) =>
  actor.type === "user"
    ? { kind: "user", email: actor.email, displayName: actor.displayName, role: actor.role, requestId: context.requestId }
    : { kind: "api_client", name: actor.name, scopes: actor.scopes, requestId: context.requestId },
);
