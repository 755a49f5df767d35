// Shared by the account commands (user, api-client): who is acting, the database, and secrets
// read from standard input (never from the command line, where they would land in shell history
// and the process list).
import os from "node:os";
import { createInterface } from "node:readline";
import { Writable } from "node:stream";
import { systemActor, type SystemActor } from "@/lib/auth/actor";
import { createDatabaseHandles } from "@/lib/db/client";
import { openDefaultDatabase } from "@/lib/db/default-database";
import { AppError } from "@/lib/errors";
import type { PrismaClient } from "@/lib/generated/prisma/client";

/** Audit actor of a command: `cli:<operating-system user>`. */
export function cliActor(): SystemActor {
  let name = process.env.USER ?? "unknown";
  try {
    name = os.userInfo().username || name;
  } catch {
    // some containers have no passwd entry for the current uid
  }
  return systemActor(`cli:${name}`);
}

export async function withDefaultDatabase<T>(work: (prisma: PrismaClient) => Promise<T>): Promise<T> {
  const database = await openDefaultDatabase();
  const { pool, prisma } = createDatabaseHandles(database.url, 2);
  try {
    return await work(prisma);
  } catch (error) {
    if ((error as { code?: string }).code === "P2021" || /relation "\w+" does not exist/.test(String((error as Error)?.message))) {
      throw new AppError("unavailable", "The database has no tables yet: run `npm run db:migrate` first.");
    }
    throw error;
  } finally {
    await prisma.$disconnect();
    await pool.end();
    await database.close();
  }
}

async function readAll(stream: NodeJS.ReadStream): Promise<string> {
  const chunks: Buffer[] = [];
  for await (const chunk of stream) chunks.push(Buffer.from(chunk));
  return Buffer.concat(chunks).toString("utf8");
}

function askHidden(prompt: string): Promise<string> {
  let muted = false;
  const output = new Writable({
    write(chunk, _encoding, done) {
      if (!muted) process.stderr.write(chunk);
      done();
    },
  });
  const reader = createInterface({ input: process.stdin, output, terminal: true });
  return new Promise((resolve) => {
    reader.question(prompt, (answer) => {
      reader.close();
      process.stderr.write("\n");
      resolve(answer);
    });
    muted = true;
  });
}

/** A password typed twice at a terminal (not echoed), or the first line of piped standard input. */
export async function readPasswordFromStdin(label: string): Promise<string> {
  if (process.stdin.isTTY) {
    const first = await askHidden(`${label}: `);
    const second = await askHidden(`${label} again: `);
    if (first !== second) throw new AppError("invalid_input", "The two passwords differ.");
    return first;
  }
  const text = await readAll(process.stdin);
  const line = text.split(/\r?\n/)[0] ?? "";
  if (!line) throw new AppError("invalid_input", "No password on standard input: pipe it in, e.g. `printf '%s\\n' \"$PASSWORD\" | npm run user -- create …`.");
  return line;
}

/** Fixed-width columns for list output. */
export function formatTable(header: string[], rows: string[][]): string {
  const widths = header.map((title, column) => Math.max(title.length, ...rows.map((row) => row[column].length)));
  const line = (cells: string[]) => cells.map((cell, column) => cell.padEnd(widths[column])).join("  ").trimEnd();
  return [line(header), line(widths.map((width) => "-".repeat(width))), ...rows.map(line)].join("\n");
}
