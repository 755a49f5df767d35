// Resolves a bearer token to its API client by the token's SHA-256 (a unique index lookup, so the
// time taken does not depend on how much of a guess was right).
import type { DbOrTx } from "@/lib/db/client";
import type { ApiClientActor } from "@/lib/auth/actor";
import { apiScopes, type ApiScope } from "@/lib/auth/permissions";
import { hashToken } from "@/lib/auth/opaque-token";

/** last_used_at is written at most this often, so a busy client does not turn every call into a write. */
const LAST_USED_RESOLUTION_MS = 60_000;

export type ApiTokenCheck =
  | { status: "ok"; actor: ApiClientActor }
  | { status: "unknown" }
  | { status: "revoked"; clientId: string; name: string; revokedAt: Date };

export interface AuthenticateApiTokenOptions {
  token: string;
  now: Date;
}

export async function authenticateApiToken(db: DbOrTx, options: AuthenticateApiTokenOptions): Promise<ApiTokenCheck> {
  if (!options.token || options.token.length > 200) return { status: "unknown" };
  const client = await db.apiClient.findUnique({
    where: { tokenHash: hashToken(options.token) },
    select: { id: true, name: true, scopes: true, lastUsedAt: true, revokedAt: true },
  });
  if (!client) return { status: "unknown" };
  if (client.revokedAt) {
    return { status: "revoked", clientId: client.id, name: client.name, revokedAt: client.revokedAt };
  }
  if (!client.lastUsedAt || options.now.getTime() - client.lastUsedAt.getTime() >= LAST_USED_RESOLUTION_MS) {
    await db.apiClient.updateMany({ where: { id: client.id, revokedAt: null }, data: { lastUsedAt: options.now } });
  }
  const scopes = client.scopes.filter((scope): scope is ApiScope => (apiScopes as readonly string[]).includes(scope));
  return { status: "ok", actor: { type: "api_client", id: client.id, name: client.name, scopes } };
}
