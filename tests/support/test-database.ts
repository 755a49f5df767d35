// Each integration test file gets its own database cloned from the migrated template, so files
// run in parallel without seeing each other's rows. With KEEP_TEST_DATABASES=1 a file whose
// tests failed keeps its database for inspection (its name is printed).
import { randomBytes } from "node:crypto";
import pg from "pg";
import { afterAll, beforeEach, inject } from "vitest";
import { createDatabaseHandles } from "@/lib/db/client";
import type { PrismaClient } from "@/lib/generated/prisma/client";
import { backgroundLinkingSettled } from "@/lib/audit/staged-audit-events";

export interface TestDatabase {
  name: string;
  url: string;
  prisma: PrismaClient;
  pool: pg.Pool;
}

function withDatabase(url: string, database: string): string {
  const parsed = new URL(url);
  parsed.pathname = `/${database}`;
  return parsed.toString();
}

async function adminQuery(sql: string): Promise<void> {
  const client = new pg.Client({ connectionString: inject("adminDatabaseUrl") });
  await client.connect();
  try {
    await client.query(sql);
  } finally {
    await client.end();
  }
}

/**
 * Drops a test file's database once its connections have closed. Prisma's $disconnect can return
 * while its pool's last connection is still saying goodbye; dropping WITH (FORCE) at that moment
 * kills it, and the dying connection's error surfaced as an uncaught exception in whichever test
 * file ran it (seen once in CI, from tests/audit/concurrent-appends). So: wait up to two seconds for
 * the database to be free, and force only after that.
 */
async function dropDatabase(name: string): Promise<void> {
  for (let attempt = 0; attempt < 20; attempt++) {
    try {
      await adminQuery(`DROP DATABASE IF EXISTS ${name}`);
      return;
    } catch (error) {
      // 55006 object_in_use: some connection is still open.
      if ((error as { code?: string }).code !== "55006") throw error;
      await new Promise((resolve) => setTimeout(resolve, 100));
    }
  }
  await adminQuery(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
}

/** Call at the top level of a test file; the database is dropped after the file's tests. */
export async function useTestDatabase(): Promise<TestDatabase> {
  const name = `t_${randomBytes(6).toString("hex")}`;
  await adminQuery(`CREATE DATABASE ${name} TEMPLATE ${inject("templateDatabase")}`);
  const url = withDatabase(inject("adminDatabaseUrl"), name);
  const { pool, prisma } = createDatabaseHandles(url, 20);
  let failed = false;
  beforeEach((context) => {
    context.onTestFailed(() => {
      failed = true;
    });
  });
  afterAll(async () => {
    // Claims link their staged audit events in the background: let that finish before the
    // connections close, or it fails against a closed pool (and says so in the test output).
    await backgroundLinkingSettled();
    await prisma.$disconnect();
    await pool.end();
    if (failed && process.env.KEEP_TEST_DATABASES) {
      console.log(`kept test database ${name} (${url})`);
      return;
    }
    await dropDatabase(name);
  });
  return { name, url, prisma, pool };
}
