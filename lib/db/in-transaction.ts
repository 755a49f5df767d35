// Runs work in a transaction: a new one when given the client, the caller's own when given a
// transaction handle. Prisma 7's transaction handle also has $transaction (it nests with
// savepoints), so `"$transaction" in db` does not tell the two apart — and a nested $transaction
// with options ({ timeout, maxWait }) left the client unable to start any later transaction
// ("Transaction already closed: A start cannot be executed on a committed transaction", 7.10).
// The handle lacks $connect, which tells them apart without nesting.
import type { Prisma, PrismaClient } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";

export interface TransactionOptions {
  maxWait?: number;
  timeout?: number;
}

export function isRootClient(db: DbOrTx): db is PrismaClient {
  return "$connect" in db;
}

export function inTransaction<T>(db: DbOrTx, work: (tx: Prisma.TransactionClient) => Promise<T>, options?: TransactionOptions): Promise<T> {
  return isRootClient(db) ? db.$transaction(work, options) : work(db);
}
