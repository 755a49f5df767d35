// Revokes an API client: its token stops working on the next request. Safe to repeat: revoking a
// revoked client changes nothing and writes no second event.
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { AUTH_TRANSACTION } from "@/lib/auth/transaction-options";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { auditActorOf, type Actor } from "@/lib/auth/actor";

export interface RevokeApiClientOptions {
  actor: Actor;
  /** By id (screens) or by name (command line). */
  client: { id: string } | { name: string };
  now: Date;
  context?: AuditContext;
}

export async function revokeApiClient(db: DbOrTx, options: RevokeApiClientOptions): Promise<{ id: string; name: string; revokedAt: Date; alreadyRevoked: boolean }> {
  const run = async (tx: Prisma.TransactionClient) => {
    const where = "id" in options.client ? { id: options.client.id } : { name: options.client.name };
    // Row lock, so two revocations at once write one event.
    const found = await tx.apiClient.findUnique({ where, select: { id: true } });
    if (!found) throw new AppError("not_found", "id" in options.client ? "No such API client." : `No API client is named "${options.client.name}".`);
    await tx.$executeRaw`SELECT 1 FROM api_clients WHERE id = ${found.id}::uuid FOR UPDATE`;
    const client = await tx.apiClient.findUniqueOrThrow({ where: { id: found.id }, select: { id: true, name: true, revokedAt: true } });
    if (client.revokedAt) return { id: client.id, name: client.name, revokedAt: client.revokedAt, alreadyRevoked: true };
    await tx.apiClient.update({ where: { id: client.id }, data: { revokedAt: options.now } });
    await recordAuditEvent(tx, {
      actor: auditActorOf(options.actor),
      event: { action: "api_client.revoked", payload: { name: client.name } },
      subject: { type: "api_client", id: client.id },
      context: options.context,
    });
    return { id: client.id, name: client.name, revokedAt: options.now, alreadyRevoked: false };
  };
  return inTransaction(db, run, AUTH_TRANSACTION);
}
