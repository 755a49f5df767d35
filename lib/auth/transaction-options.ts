// Transactions of sign-in and account administration append to the audit chain, whose advisory
// lock may be held for a moment by a large ingest batch; Prisma's default 2 s wait for a connection
// and 5 s transaction limit are too tight for that on a busy server.
import type { TransactionOptions } from "@/lib/db/in-transaction";

export const AUTH_TRANSACTION: TransactionOptions = { maxWait: 10_000, timeout: 30_000 };
