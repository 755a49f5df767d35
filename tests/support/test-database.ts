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
    await adminQuery(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
  });
  return { name, url, prisma, pool };
}
