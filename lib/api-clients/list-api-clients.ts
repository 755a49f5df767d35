import type { DbOrTx } from "@/lib/db/client";
import type { ApiClientSummary } from "@/lib/api-clients/schemas";

/** Every API client, active ones first, newest first. Never includes a token or its hash. */
export async function listApiClients(db: DbOrTx): Promise<ApiClientSummary[]> {
  const rows = await db.apiClient.findMany({
    orderBy: [{ createdAt: "desc" }, { name: "asc" }],
    select: { id: true, name: true, tokenPrefix: true, scopes: true, createdAt: true, lastUsedAt: true, revokedAt: true, createdBy: { select: { email: true } } },
  });
  return rows
    .map((row) => ({ ...row, createdBy: row.createdBy?.email ?? null }))
    .sort((a, b) => Number(a.revokedAt !== null) - Number(b.revokedAt !== null));
}
