// Applies prisma/migrations/<timestamp>_<name>/migration.sql in order, each in its own
// transaction, and records it in Prisma's own `_prisma_migrations` table with the same
// SHA-256 checksum, so `prisma migrate deploy` (where its engine can be installed) sees the
// same history. An applied migration that was edited afterwards is refused, naming the file.
import { createHash, randomUUID } from "node:crypto";
import { existsSync } from "node:fs";
import { readdir, readFile } from "node:fs/promises";
import path from "node:path";
import type pg from "pg";
import { AppError } from "@/lib/errors";

export const MIGRATIONS_DIR = path.resolve(process.cwd(), "prisma", "migrations");

// Prisma's own advisory-lock key for migrations, so its engine and this runner exclude each other.
const MIGRATION_LOCK_KEY = 72707369;

export interface MigrationFile {
  name: string;
  file: string;
  sql: string;
  checksum: string;
}

export interface MigrationResult {
  applied: string[];
  alreadyApplied: number;
}

export async function readMigrationFiles(dir = MIGRATIONS_DIR): Promise<MigrationFile[]> {
  const entries = await readdir(dir, { withFileTypes: true });
  const names = entries
    .filter((entry) => entry.isDirectory() && /^\d{14}_[a-z0-9_]+$/.test(entry.name))
    .map((entry) => entry.name)
    .sort();
  const files: MigrationFile[] = [];
  for (const name of names) {
    const file = path.join(dir, name, "migration.sql");
    if (!existsSync(file)) throw new AppError("invalid_input", `Migration folder ${name} has no migration.sql`);
    const sql = await readFile(file, "utf8");
    files.push({ name, file, sql, checksum: createHash("sha256").update(sql).digest("hex") });
  }
  return files;
}

const CREATE_HISTORY_TABLE = `
CREATE TABLE IF NOT EXISTS "_prisma_migrations" (
  "id"                  VARCHAR(36) PRIMARY KEY NOT NULL,
  "checksum"            VARCHAR(64) NOT NULL,
  "finished_at"         TIMESTAMPTZ,
  "migration_name"      VARCHAR(255) NOT NULL,
  "logs"                TEXT,
  "rolled_back_at"      TIMESTAMPTZ,
  "started_at"          TIMESTAMPTZ NOT NULL DEFAULT now(),
  "applied_steps_count" INTEGER NOT NULL DEFAULT 0
)`;

export async function applyPendingMigrations(
  client: pg.Client | pg.PoolClient,
  options: { dir?: string; log?: (line: string) => void } = {},
): Promise<MigrationResult> {
  const log = options.log ?? (() => undefined);
  const files = await readMigrationFiles(options.dir);
  await client.query("SELECT pg_advisory_lock($1)", [MIGRATION_LOCK_KEY]);
  try {
    await client.query(CREATE_HISTORY_TABLE);
    const { rows } = await client.query<{ migration_name: string; checksum: string }>(
      `SELECT migration_name, checksum FROM "_prisma_migrations"
        WHERE finished_at IS NOT NULL AND rolled_back_at IS NULL`,
    );
    const appliedChecksums = new Map(rows.map((row) => [row.migration_name, row.checksum]));

    for (const file of files) {
      const recorded = appliedChecksums.get(file.name);
      if (recorded !== undefined && recorded !== file.checksum) {
        throw new AppError(
          "conflict",
          `Migration ${path.relative(process.cwd(), file.file)} was edited after it was applied (checksum differs). Restore it and add a new migration instead.`,
        );
      }
    }
    const known = new Set(files.map((file) => file.name));
    for (const name of appliedChecksums.keys()) {
      if (!known.has(name)) log(`note: the database has migration ${name}, which this checkout does not have`);
    }

    const applied: string[] = [];
    for (const file of files) {
      if (appliedChecksums.has(file.name)) continue;
      log(`applying ${file.name}`);
      await client.query("BEGIN");
      try {
        await client.query(file.sql);
        await client.query(
          `INSERT INTO "_prisma_migrations" (id, checksum, finished_at, migration_name, started_at, applied_steps_count)
           VALUES ($1, $2, now(), $3, now(), 1)`,
          [randomUUID(), file.checksum, file.name],
        );
        await client.query("COMMIT");
      } catch (error) {
        await client.query("ROLLBACK");
        throw new AppError("unavailable", `Migration ${file.name} failed and was rolled back: ${(error as Error).message}`);
      }
      applied.push(file.name);
    }
    return { applied, alreadyApplied: files.length - applied.length };
  } finally {
    await client.query("SELECT pg_advisory_unlock($1)", [MIGRATION_LOCK_KEY]);
  }
}
