// Every command of the project (demo, migrate, ingest, user admin, audit verify, bench) opens
// the same database: DATABASE_URL when set, otherwise the embedded server on .data/pg —
// connecting to it when it is already running, starting it for the command otherwise.
import path from "node:path";
import pg from "pg";
import { AppError } from "@/lib/errors";
import { ensureLocalServer, findFreePort, isPortFree, type LocalServer } from "@/lib/db/local-server";

export const DEFAULT_DATA_DIR = path.resolve(process.cwd(), process.env.TRIAGE_DATA_DIR ?? ".data/pg");
export const DEFAULT_DATABASE_NAME = "triage_desk";

export interface OpenDatabase {
  url: string;
  /** Set when the embedded server is used. */
  server?: LocalServer;
  /** Stops the embedded server if this command started it. */
  close(): Promise<void>;
}

function describeTarget(url: string): string {
  try {
    const parsed = new URL(url);
    return `${parsed.hostname}:${parsed.port || "5432"}${parsed.pathname}`;
  } catch {
    return "the configured address";
  }
}

/** Fails with one readable line when the server cannot be reached or refuses us. */
export async function checkReachable(url: string): Promise<void> {
  const client = new pg.Client({ connectionString: url, connectionTimeoutMillis: 5000 });
  try {
    await client.connect();
    await client.query("SELECT 1");
  } catch (error) {
    const reason = (error as { code?: string; message?: string }).code ?? (error as Error).message;
    throw new AppError("unavailable", `Cannot reach the database at ${describeTarget(url)} (${reason}). Check DATABASE_URL.`);
  } finally {
    await client.end().catch(() => undefined);
  }
}

export async function createDatabaseIfMissing(serverUrl: string, database: string): Promise<void> {
  const client = new pg.Client({ connectionString: serverUrl });
  await client.connect();
  try {
    const { rowCount } = await client.query("SELECT 1 FROM pg_database WHERE datname = $1", [database]);
    if (!rowCount) await client.query(`CREATE DATABASE "${database.replaceAll('"', '""')}"`);
  } finally {
    await client.end();
  }
}

export async function openDefaultDatabase(): Promise<OpenDatabase> {
  const configured = process.env.DATABASE_URL;
  if (configured) {
    await checkReachable(configured);
    return { url: configured, close: async () => undefined };
  }
  // A stable port when we can have it, so a saved psql or BI connection keeps working.
  const preferred = Number(process.env.TRIAGE_PG_PORT ?? 54329);
  const port = (await isPortFree(preferred)) ? preferred : await findFreePort();
  const server = await ensureLocalServer({ dataDir: DEFAULT_DATA_DIR, port });
  try {
    await createDatabaseIfMissing(server.urlFor("postgres"), DEFAULT_DATABASE_NAME);
  } catch (error) {
    if (server.startedHere) await server.stop();
    throw error;
  }
  return {
    url: server.urlFor(DEFAULT_DATABASE_NAME),
    server,
    close: async () => {
      if (server.startedHere) await server.stop();
    },
  };
}
