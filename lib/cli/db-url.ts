// npm run db:url — print the connection URL of the default database (for psql or a BI tool).
// When the embedded server is not running this starts it and leaves it running, because a
// printed URL is only useful if something answers at it; `npm run db:stop` stops it.
import { openDefaultDatabase } from "@/lib/db/default-database";
import { runCommand } from "@/lib/cli/run-command";

await runCommand(async () => {
  const database = await openDefaultDatabase();
  console.log(database.url);
  if (database.server?.startedHere) {
    console.error("(started the embedded server for you; stop it with `npm run db:stop`)");
  }
});
