// One PostgreSQL server per test run: the embedded one in a temporary folder on a free port,
// or the server of TEST_DATABASE_URL when given. Migrations are applied once into a template
// database; each integration test file clones its own database from it (tests/support/test-database.ts).
import { mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import type { TestProject } from "vitest/node";
import { ensureLocalServer } from "@/lib/db/local-server";
import { applyPendingMigrations } from "@/lib/db/migrations";

declare module "vitest" {
  export interface ProvidedContext {
    adminDatabaseUrl: string;
    templateDatabase: string;
  }
}

function withDatabase(url: string, database: string): string {
  const parsed = new URL(url);
  parsed.pathname = `/${database}`;
  return parsed.toString();
}

export default async function setup(project: TestProject) {
  let adminUrl: string;
  let cleanup: () => Promise<void>;
  if (process.env.TEST_DATABASE_URL) {
    adminUrl = process.env.TEST_DATABASE_URL;
    cleanup = async () => undefined;
  } else {
    const folder = await mkdtemp(path.join(os.tmpdir(), "triage-desk-test-"));
    // The folder must be reachable by the `postgres` user when the run is root (CI).
    const { chmod } = await import("node:fs/promises");
    await chmod(folder, 0o755);
    const server = await ensureLocalServer({ dataDir: path.join(folder, "pg"), durable: false });
    adminUrl = server.urlFor("postgres");
    cleanup = async () => {
      await server.stop();
      if (!process.env.KEEP_TEST_DATABASES) await rm(folder, { recursive: true, force: true });
      else console.log(`test databases kept in ${folder} (server stopped; start it with pg_ctl -D ${folder}/pg start)`);
    };
  }

  const template = `triage_template_${process.pid}`;
  const admin = new pg.Client({ connectionString: adminUrl });
  await admin.connect();
  await admin.query(`DROP DATABASE IF EXISTS ${template}`);
  await admin.query(`CREATE DATABASE ${template}`);
  await admin.end();

  const templateClient = new pg.Client({ connectionString: withDatabase(adminUrl, template) });
  await templateClient.connect();
  try {
    await applyPendingMigrations(templateClient);
  } finally {
    await templateClient.end();
  }

  project.provide("adminDatabaseUrl", adminUrl);
  project.provide("templateDatabase", template);

  return async () => {
    if (process.env.TEST_DATABASE_URL) {
      const client = new pg.Client({ connectionString: adminUrl });
      await client.connect();
      await client.query(`DROP DATABASE IF EXISTS ${template}`);
      await client.end();
    }
    await cleanup();
  };
}
