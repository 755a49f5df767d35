// The label export of `npm run bench`, run in a fresh child process so that its peak resident set
// size (getrusage maxrss) belongs to the export alone. Prints one JSON line on stdout.
//   tsx --conditions=react-server lib/bench/export-child.ts <database url> <choices JSON> <supervisor id> <directory> <now ISO>
import { readFileSync } from "node:fs";
import { stat } from "node:fs/promises";
import path from "node:path";
import { createDatabaseHandles } from "@/lib/db/client";
import { createLabelExport } from "@/lib/exports/create-label-export";

/**
 * Peak resident set size of this process, in MiB. On Linux from VmHWM in /proc/self/status, which
 * starts afresh at exec: getrusage's ru_maxrss survives exec, so in a child it reports the parent's
 * size at the fork whenever that was larger (the benchmark's parent holds the generated alerts: it
 * showed 479 MiB "before exporting anything" at 1,000,000 alerts). Elsewhere, ru_maxrss.
 */
function peakRssMiB(): number {
  try {
    const match = /^VmHWM:\s+(\d+) kB$/m.exec(readFileSync("/proc/self/status", "utf8"));
    if (match) return Number(match[1]) / 1024;
  } catch {
    // not Linux
  }
  return process.resourceUsage().maxRSS / 1024;
}

const [, , url, choicesJson, supervisorId, directory, nowIso] = process.argv;
const { prisma, pool } = createDatabaseHandles(url, 4);
try {
  // What the process holds before exporting anything: Node, the Prisma client, a pool connection.
  await prisma.labelExport.count();
  const baselineRssMiB = peakRssMiB();
  const start = process.hrtime.bigint();
  const job = await createLabelExport(
    { prisma, pool },
    {
      actor: { type: "user", id: supervisorId, email: "bench-supervisor@example.org", displayName: "Bench supervisor", role: "supervisor", sessionId: null },
      choices: JSON.parse(choicesJson) as unknown,
      now: new Date(nowIso),
      destination: { kind: "file", directory },
    },
  );
  const result = await job.completion;
  const seconds = Number(process.hrtime.bigint() - start) / 1e9;
  const bytes = job.fileName ? (await stat(path.join(directory, job.fileName))).size : 0;
  console.log(JSON.stringify({ status: result.status, error: result.error, rows: result.rowCount, seconds, fileBytes: bytes, baselineRssMiB, peakRssMiB: peakRssMiB() }));
} finally {
  await prisma.$disconnect();
  await pool.end();
}
