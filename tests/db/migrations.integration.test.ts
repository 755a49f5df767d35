import { cp, mkdtemp, readFile, writeFile } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { describe, expect, it } from "vitest";
import { applyPendingMigrations, MIGRATIONS_DIR, readMigrationFiles } from "@/lib/db/migrations";
import { useTestDatabase } from "@/tests/support/test-database";

const database = await useTestDatabase();

async function withClient<T>(run: (client: pg.Client) => Promise<T>): Promise<T> {
  const client = new pg.Client({ connectionString: database.url });
  await client.connect();
  try {
    return await run(client);
  } finally {
    await client.end();
  }
}

describe("the migration runner", () => {
  it("records every migration with Prisma's SHA-256 checksum and applies nothing twice", async () => {
    const files = await readMigrationFiles();
    await withClient(async (client) => {
      const { rows } = await client.query(`SELECT migration_name, checksum FROM "_prisma_migrations" ORDER BY migration_name`);
      expect(rows.map((row) => row.migration_name)).toEqual(files.map((file) => file.name));
      expect(rows.map((row) => row.checksum)).toEqual(files.map((file) => file.checksum));
      const again = await applyPendingMigrations(client);
      expect(again).toEqual({ applied: [], alreadyApplied: files.length });
    });
  });

  it("refuses, naming the file, when an applied migration was edited afterwards", async () => {
    const folder = await mkdtemp(path.join(os.tmpdir(), "migrations-"));
    await cp(MIGRATIONS_DIR, folder, { recursive: true });
    const [first] = await readMigrationFiles(folder);
    await writeFile(first.file, `${await readFile(first.file, "utf8")}\n-- edited later\n`);
    await withClient(async (client) => {
      await expect(applyPendingMigrations(client, { dir: folder })).rejects.toThrow(
        new RegExp(`${first.name}/migration.sql was edited after it was applied`),
      );
    });
  });

  it("applies a new migration in a transaction and rolls back a failing one completely", async () => {
    const folder = await mkdtemp(path.join(os.tmpdir(), "migrations-"));
    await cp(MIGRATIONS_DIR, folder, { recursive: true });
    const { mkdir } = await import("node:fs/promises");
    await mkdir(path.join(folder, "29991231000000_broken"));
    await writeFile(
      path.join(folder, "29991231000000_broken", "migration.sql"),
      "CREATE TABLE half_done (id int);\nSELECT no_such_function();\n",
    );
    await withClient(async (client) => {
      await expect(applyPendingMigrations(client, { dir: folder })).rejects.toThrow(/29991231000000_broken failed and was rolled back/);
      const { rowCount } = await client.query("SELECT 1 FROM pg_tables WHERE tablename = 'half_done'");
      expect(rowCount).toBe(0);
      const recorded = await client.query(`SELECT 1 FROM "_prisma_migrations" WHERE migration_name = '29991231000000_broken'`);
      expect(recorded.rowCount).toBe(0);
    });
  });
});
