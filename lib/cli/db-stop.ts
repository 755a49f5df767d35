// npm run db:stop — stop the embedded server of this checkout if it is running.
import { DEFAULT_DATA_DIR } from "@/lib/db/default-database";
import { ensureLocalServer, runningServerPort } from "@/lib/db/local-server";
import { runCommand } from "@/lib/cli/run-command";

await runCommand(async () => {
  if ((await runningServerPort(DEFAULT_DATA_DIR)) === undefined) {
    console.log("The embedded server is not running.");
    return;
  }
  const server = await ensureLocalServer({ dataDir: DEFAULT_DATA_DIR });
  await server.stop();
  console.log("Stopped the embedded server.");
});
