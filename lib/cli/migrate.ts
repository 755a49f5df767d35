// npm run db:migrate — apply pending SQL migrations to the default database.
import pg from "pg";
import { openDefaultDatabase } from "@/lib/db/default-database";
import { applyPendingMigrations } from "@/lib/db/migrations";
import { runCommand } from "@/lib/cli/run-command";

await runCommand(async () => {
  const database = await openDefaultDatabase();
  const client = new pg.Client({ connectionString: database.url });
  try {
    await client.connect();
    const result = await applyPendingMigrations(client, { log: (line) => console.log(line) });
    console.log(`${result.applied.length} migration(s) applied, ${result.alreadyApplied} already in place.`);
  } finally {
    await client.end().catch(() => undefined);
    await database.close();
  }
});
