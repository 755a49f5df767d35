// Serves the production build for the browser tests on its own throwaway embedded database,
// loaded with the demo scenario, so the tests never touch the developer's .data folder.
import { spawn } from "node:child_process";
import { chmod, mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { createDatabaseIfMissing } from "@/lib/db/default-database";
import { ensureLocalServer } from "@/lib/db/local-server";
import { applyPendingMigrations } from "@/lib/db/migrations";
import { loadDemoScenarioIfEmpty } from "@/demo-data/load-demo-scenario";

const port = Number(process.env.E2E_PORT ?? 3100);
const folder = await mkdtemp(path.join(os.tmpdir(), "triage-desk-e2e-"));
await chmod(folder, 0o755);
const server = await ensureLocalServer({ dataDir: path.join(folder, "pg"), durable: false });
const cleanUp = async () => {
  await server.stop();
  await rm(folder, { recursive: true, force: true });
};

try {
  await createDatabaseIfMissing(server.urlFor("postgres"), "triage_desk");
  const url = server.urlFor("triage_desk");
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  await applyPendingMigrations(client);
  await client.end();
  await loadDemoScenarioIfEmpty({ databaseUrl: url, log: (line) => console.log(line) });

  const app = spawn(path.resolve("node_modules/.bin/next"), ["start", "-p", String(port), "-H", "127.0.0.1"], {
    stdio: "inherit",
    env: { ...process.env, DATABASE_URL: url, PORT: String(port) },
  });
  const stop = async () => {
    app.kill("SIGTERM");
    await cleanUp();
    process.exit(0);
  };
  process.on("SIGTERM", () => void stop());
  process.on("SIGINT", () => void stop());
  app.on("exit", async (code) => {
    await cleanUp();
    process.exit(code ?? 1);
  });
} catch (error) {
  console.error(error);
  await cleanUp();
  process.exit(1);
}
