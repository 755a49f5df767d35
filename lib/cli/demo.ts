// npm run demo — the one command a new team runs: database (embedded unless DATABASE_URL),
// migrations, demo scenario on an empty database, a production build when sources changed,
// then the app on http://localhost:$PORT. Ctrl-C stops the app and the embedded server.
import { spawn, type ChildProcess } from "node:child_process";
import { existsSync, readdirSync, statSync } from "node:fs";
import path from "node:path";
import pg from "pg";
import { openDefaultDatabase } from "@/lib/db/default-database";
import { isPortFree } from "@/lib/db/local-server";
import { applyPendingMigrations } from "@/lib/db/migrations";
import { AppError } from "@/lib/errors";
import { runCommand } from "@/lib/cli/run-command";
import { DEMO_PASSWORD, demoSignIns, DEMO_INSTITUTION } from "@/demo-data/people";

const root = process.cwd();

function newestSourceTime(): number {
  let newest = 0;
  const walk = (dir: string) => {
    for (const entry of readdirSync(dir, { withFileTypes: true })) {
      if (entry.name === "generated" || entry.name.startsWith(".")) continue;
      const full = path.join(dir, entry.name);
      if (entry.isDirectory()) walk(full);
      else newest = Math.max(newest, statSync(full).mtimeMs);
    }
  };
  for (const dir of ["app", "lib", "demo-data", "prisma"]) if (existsSync(path.join(root, dir))) walk(path.join(root, dir));
  for (const file of ["next.config.js", "package.json", "postcss.config.mjs", "tsconfig.json"]) {
    if (existsSync(path.join(root, file))) newest = Math.max(newest, statSync(path.join(root, file)).mtimeMs);
  }
  return newest;
}

function buildIsCurrent(): boolean {
  const marker = path.join(root, ".next", "BUILD_ID");
  return existsSync(marker) && statSync(marker).mtimeMs >= newestSourceTime();
}

function run(command: string, args: string[], env: NodeJS.ProcessEnv): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { stdio: "inherit", env });
    child.on("exit", (code) => (code === 0 ? resolve() : reject(new AppError("unavailable", `${command} ${args.join(" ")} failed (exit ${code})`))));
  });
}

await runCommand(async () => {
  const port = Number(process.env.PORT ?? 3000);
  if (!Number.isInteger(port) || port <= 0 || port > 65535) throw new AppError("invalid_input", `PORT must be a port number, got "${process.env.PORT}"`);
  if (!(await isPortFree(port))) {
    throw new AppError("unavailable", `Port ${port} is already in use; stop what runs there or start with PORT=<another port> npm run demo.`);
  }

  const database = await openDefaultDatabase();
  let app: ChildProcess | undefined;
  let stopping = false;
  const stop = async (code: number) => {
    if (stopping) return;
    stopping = true;
    if (app && app.exitCode === null) {
      app.kill("SIGTERM");
      await new Promise((resolve) => app?.once("exit", resolve));
    }
    await database.close();
    process.exit(code);
  };
  process.on("SIGINT", () => void stop(0));
  process.on("SIGTERM", () => void stop(0));

  try {
    console.log(database.server ? `Database: embedded PostgreSQL on port ${database.server.port} (data in ${path.relative(root, database.server.dataDir)})` : "Database: DATABASE_URL");
    const client = new pg.Client({ connectionString: database.url });
    await client.connect();
    try {
      const migrations = await applyPendingMigrations(client, { log: (line) => console.log(`  ${line}`) });
      console.log(`Migrations: ${migrations.applied.length} applied, ${migrations.alreadyApplied} already in place.`);
    } finally {
      await client.end();
    }

    const { loadDemoScenarioIfEmpty } = await import("@/demo-data/load-demo-scenario");
    await loadDemoScenarioIfEmpty({ databaseUrl: database.url, log: (line: string) => console.log(line) });

    const env = { ...process.env, DATABASE_URL: database.url, PORT: String(port) };
    if (!buildIsCurrent()) {
      console.log("Building the app (first run or sources changed; this takes a minute or two)…");
      await run("npm", ["run", "--silent", "build"], env);
    }

    app = spawn(path.join(root, "node_modules", ".bin", "next"), ["start", "-p", String(port)], { stdio: ["ignore", "pipe", "inherit"], env });
    // Next writes "Local:" and "Ready" in separate chunks: say where the app is once.
    let announced = false;
    app.stdout?.on("data", (chunk: Buffer) => {
      const text = chunk.toString();
      if (!announced && /ready|started|Local:/i.test(text)) {
        announced = true;
        console.log("");
        console.log(`Triage Desk (${DEMO_INSTITUTION}, invented demo data) is running at http://localhost:${port}`);
        console.log(`Demo sign-ins, password "${DEMO_PASSWORD}" (for local evaluation only):`);
        for (const [role, email] of Object.entries(demoSignIns)) console.log(`  ${role.padEnd(14)} ${email}`);
        console.log("Press Ctrl-C to stop the app and the embedded database.");
      }
    });
    app.on("exit", (code) => {
      if (!stopping) {
        console.error(`error: the app stopped unexpectedly (exit ${code}).`);
        void stop(1);
      }
    });
    await new Promise(() => undefined); // until a signal stops us
  } catch (error) {
    await database.close();
    throw error;
  }
});
