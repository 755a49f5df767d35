// Creates an API client and returns its token once; only the token's SHA-256 and its first few
// characters are stored (OWASP ASVS 5.0 §13.3, secrets not kept in clear; from memory).
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { AUTH_TRANSACTION } from "@/lib/auth/transaction-options";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { hashToken, newOpaqueToken } from "@/lib/auth/opaque-token";
import { API_TOKEN_PREFIX, VISIBLE_TOKEN_CHARACTERS, createApiClientInputSchema, type ApiClientSummary } from "@/lib/api-clients/schemas";

export interface CreateApiClientOptions {
  actor: Actor;
  name: string;
  scopes: string[];
  now?: Date;
  context?: AuditContext;
}

export async function createApiClient(db: DbOrTx, options: CreateApiClientOptions): Promise<{ client: ApiClientSummary; token: string }> {
  const parsed = createApiClientInputSchema.safeParse({ name: options.name, scopes: options.scopes });
  if (!parsed.success) {
    throw new AppError("invalid_input", "The API client is not valid.", parsed.error.issues.map((issue) => ({ path: issue.path.join("."), message: issue.message })));
  }
  const { name, scopes } = parsed.data;
  const token = `${API_TOKEN_PREFIX}${newOpaqueToken()}`;
  const run = async (tx: Prisma.TransactionClient) => {
    if (await tx.apiClient.findUnique({ where: { name }, select: { id: true } })) {
      throw new AppError("conflict", `An API client named "${name}" already exists.`, [{ path: "name", message: "This name is taken." }]);
    }
    const row = await tx.apiClient.create({
      data: {
        name,
        scopes,
        tokenHash: hashToken(token),
        tokenPrefix: token.slice(0, VISIBLE_TOKEN_CHARACTERS),
        createdById: options.actor.type === "user" ? options.actor.id : null,
        ...(options.now ? { createdAt: options.now } : {}),
      },
    });
    await recordAuditEvent(tx, {
      actor: auditActorOf(options.actor),
      event: { action: "api_client.created", payload: { name, scopes } },
      subject: { type: "api_client", id: row.id },
      context: options.context,
    });
    const createdBy = options.actor.type === "user" ? options.actor.email : options.actor.type === "system" ? options.actor.name : null;
    const client: ApiClientSummary = {
      id: row.id,
      name: row.name,
      tokenPrefix: row.tokenPrefix,
      scopes: row.scopes,
      createdAt: row.createdAt,
      createdBy,
      lastUsedAt: null,
      revokedAt: null,
    };
    return { client, token };
  };
  return inTransaction(db, run, AUTH_TRANSACTION);
}
