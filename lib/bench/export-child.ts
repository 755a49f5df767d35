// The label export of `npm run bench`, run in a fresh child process so that its peak resident set
// size (getrusage maxrss) belongs to the export alone. Prints one JSON line on stdout.
//   tsx --conditions=react-server lib/bench/export-child.ts <database url> <choices JSON> <supervisor id> <directory> <now ISO>
import { stat } from "node:fs/promises";
import path from "node:path";
import { createDatabaseHandles } from "@/lib/db/client";
import { createLabelExport } from "@/lib/exports/create-label-export";

const [, , url, choicesJson, supervisorId, directory, nowIso] = process.argv;
const { prisma, pool } = createDatabaseHandles(url, 4);
try {
  // What the process holds before exporting anything: Node, the Prisma client, a pool connection.
  await prisma.labelExport.count();
  const baselineRssMiB = process.resourceUsage().maxRSS / 1024;
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
  // ru_maxrss is in kilobytes on Linux; Node reports it as is.
  const peakRssMiB = process.resourceUsage().maxRSS / 1024;
  console.log(JSON.stringify({ status: result.status, error: result.error, rows: result.rowCount, seconds, fileBytes: bytes, baselineRssMiB, peakRssMiB }));
} finally {
  await prisma.$disconnect();
  await pool.end();
}
