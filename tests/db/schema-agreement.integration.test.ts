import { readFile } from "node:fs/promises";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { actualColumns, compareColumns, expectedColumnsFromPrismaSchema } from "@/tests/support/schema-agreement";
import { useTestDatabase } from "@/tests/support/test-database";

const database = await useTestDatabase();
const schemaText = await readFile(path.resolve("prisma/schema.prisma"), "utf8");

describe("prisma/schema.prisma and the migrated database", () => {
  it("agree on every table, column, type and nullability", async () => {
    const expected = expectedColumnsFromPrismaSchema(schemaText);
    expect(expected.length).toBeGreaterThan(100);
    expect(compareColumns(expected, await actualColumns(database.pool))).toEqual([]);
  });

  it("disagree when only schema.prisma changes a column", async () => {
    const edited = schemaText.replace(/displayName\s+String\s/, "displayName  String? ");
    expect(edited).not.toBe(schemaText);
    const differences = compareColumns(expectedColumnsFromPrismaSchema(edited), await actualColumns(database.pool));
    expect(differences).toEqual(["users.display_name: optional in schema.prisma, NOT NULL in the database"]);
  });

  it("disagree when only the database changes a column", async () => {
    await database.pool.query("ALTER TABLE alerts ALTER COLUMN score TYPE real");
    await database.pool.query("ALTER TABLE outcomes ADD COLUMN stray integer");
    try {
      const differences = compareColumns(expectedColumnsFromPrismaSchema(schemaText), await actualColumns(database.pool));
      expect(differences).toEqual([
        "alerts.score: type double precision in schema.prisma, real in the database",
        "outcomes.stray: in the database, missing in schema.prisma",
      ]);
    } finally {
      await database.pool.query("ALTER TABLE alerts ALTER COLUMN score TYPE double precision");
      await database.pool.query("ALTER TABLE outcomes DROP COLUMN stray");
    }
  });
});
