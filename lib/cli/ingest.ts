// npm run ingest -- <file> [--kind alerts|labels|outcomes] [--atomic] [--batch-size N]
// Back-fills from a file (CSV with a header row, NDJSON, or a JSON array) through the same ingest
// functions as the API, audited as `cli:<os user>`. Without --atomic the file goes in batches of
// --batch-size rows (default 2,000), each committed on its own: an interrupted run can simply be
// started again, since ingest is idempotent. With --atomic the whole file is one batch: all or nothing.
// Progress goes to stderr, the summary to stdout; exit 1 when any row was rejected or conflicted.
import { readFile } from "node:fs/promises";
import path from "node:path";
import { AppError } from "@/lib/errors";
import { cliActor, withDefaultDatabase } from "@/lib/cli/cli-support";
import { parseArguments, runCommand } from "@/lib/cli/run-command";
import { INGEST_KINDS, type IngestAnswer, type IngestKind, type IngestProblem } from "@/lib/ingest/ingest-batch";
import { ingestAlertBatches, ingestAlerts } from "@/lib/ingest/ingest-alerts";
import { ingestLabels } from "@/lib/ingest/ingest-labels";
import { ingestOutcomes } from "@/lib/ingest/ingest-outcomes";
import { csvRecordToAlertInput, csvRecordToLabelInput, csvRecordToOutcomeInput, parseCsv, parseJsonArrayBody, parseNdjsonBody } from "@/lib/ingest/parse-body";

const USAGE = "usage: npm run ingest -- <file.csv|file.ndjson|file.json> [--kind alerts|labels|outcomes] [--atomic] [--batch-size N]";
const ingestByKind = { alerts: ingestAlerts, labels: ingestLabels, outcomes: ingestOutcomes } as const;
const csvConverters = { alerts: csvRecordToAlertInput, labels: csvRecordToLabelInput, outcomes: csvRecordToOutcomeInput } as const;

/** The rows of the file and the line each starts on (for messages a person can find in an editor). */
function parseFile(text: string, fileName: string, kind: IngestKind): { rows: unknown[]; lineOf: (row: number) => number | null } {
  const extension = path.extname(fileName).toLowerCase();
  const start = text.replace(/^\uFEFF/, "").trimStart()[0];
  const format = extension === ".csv" ? "csv" : [".ndjson", ".jsonl"].includes(extension) ? "ndjson" : extension === ".json" || start === "[" ? "json" : start === "{" ? "ndjson" : "csv";
  if (format === "csv") {
    const parsed = parseCsv(text);
    if (!parsed.ok) throw new AppError("invalid_input", `${fileName}: ${parsed.message}`);
    return { rows: parsed.rows.map(csvConverters[kind]), lineOf: (row) => parsed.lineNumbers[row] ?? null };
  }
  if (format === "ndjson") {
    const parsed = parseNdjsonBody(text);
    if (!parsed.ok) throw new AppError("invalid_input", `${fileName}: ${parsed.message}`);
    return { rows: parsed.rows, lineOf: (row) => parsed.lineNumbers[row] ?? null };
  }
  const parsed = parseJsonArrayBody(text);
  if (!parsed.ok) throw new AppError("invalid_input", `${fileName}: ${parsed.message}`);
  return { rows: parsed.rows, lineOf: () => null };
}

function count(value: number): string {
  return value.toLocaleString("en");
}

await runCommand(async () => {
  const { positional, options } = parseArguments(process.argv.slice(2));
  if (options.help || positional.length !== 1) {
    console.log(USAGE);
    return options.help ? 0 : 1;
  }
  const kind = (options.kind ?? "alerts") as IngestKind;
  if (!INGEST_KINDS.includes(kind)) throw new AppError("invalid_input", `--kind must be one of ${INGEST_KINDS.join(", ")}`);
  const batchSize = options["batch-size"] === undefined ? 2_000 : Number(options["batch-size"]);
  if (!Number.isSafeInteger(batchSize) || batchSize < 1) throw new AppError("invalid_input", "--batch-size must be a whole number of 1 or more");
  const atomic = options.atomic === true;

  const file = positional[0];
  const text = await readFile(file, "utf8").catch((error: NodeJS.ErrnoException) => {
    throw new AppError("invalid_input", `cannot read ${file}: ${error.code === "ENOENT" ? "no such file" : error.message}`);
  });
  const fileName = path.basename(file);
  const { rows, lineOf } = parseFile(text, fileName, kind);

  return withDefaultDatabase(async (prisma) => {
    const actor = cliActor();
    const started = performance.now();
    const totals = { accepted: 0, duplicate: 0, conflict: 0, rejected: 0 };
    const problems: IngestProblem[] = [];
    const batches: string[] = [];
    const size = atomic ? Math.max(rows.length, 1) : batchSize;
    const progress = (done: number) => {
      const line = `${kind} ${count(done)}/${count(rows.length)} · accepted ${count(totals.accepted)} · duplicate ${count(totals.duplicate)} · conflict ${count(totals.conflict)} · rejected ${count(totals.rejected)}`;
      if (process.stderr.isTTY) process.stderr.write(`\r${line}\x1b[K`);
      else process.stderr.write(`${line}\n`);
    };

    // An empty file still makes one (empty) batch, so the run shows in the ingest log.
    const offsets = rows.length === 0 ? [0] : Array.from({ length: Math.ceil(rows.length / size) }, (_, index) => index * size);
    const tally = (answer: IngestAnswer, offset: number) => {
      batches.push(answer.batchId);
      for (const key of Object.keys(totals) as (keyof typeof totals)[]) totals[key] += answer[key];
      problems.push(...answer.errors, ...answer.conflicts);
      progress(Math.min(offset + size, rows.length));
    };
    if (kind === "alerts") {
      // Alerts, the bulk of any back-fill, are pipelined: the next batch is checked and priced
      // while the database stores the ones before, two side by side (lib/ingest/ingest-alerts.ts).
      const batchesOfFile = (function* () {
        for (const offset of offsets) yield { rows: rows.slice(offset, offset + size), rowOffset: offset, now: new Date() };
      })();
      await ingestAlertBatches(prisma, batchesOfFile, { actor, channel: "command_line", atomic, fileName }, tally);
    } else {
      for (const offset of offsets) {
        const answer: IngestAnswer = await ingestByKind[kind](prisma, {
          actor,
          rows: rows.slice(offset, offset + size),
          channel: "command_line",
          atomic,
          fileName,
          rowOffset: offset,
          now: new Date(),
        });
        tally(answer, offset);
      }
    }
    if (process.stderr.isTTY) process.stderr.write("\n");

    const seconds = (performance.now() - started) / 1000;
    console.log(
      `${fileName}: ${count(rows.length)} ${kind} rows in ${seconds.toFixed(1)} s (${batches.length} batch${batches.length === 1 ? "" : "es"}${atomic ? ", atomic" : ""}): ` +
        `${count(totals.accepted)} accepted, ${count(totals.duplicate)} duplicate, ${count(totals.conflict)} conflict, ${count(totals.rejected)} rejected.`,
    );
    if (atomic && totals.accepted === 0 && totals.rejected + totals.conflict > 0) console.log("Atomic: nothing was stored because of the rows below.");
    problems.sort((a, b) => a.row - b.row);
    for (const problem of problems.slice(0, 20)) {
      const line = lineOf(problem.row);
      console.log(`  row ${problem.row}${line === null ? "" : ` (line ${line})`}${problem.externalId ? ` ${problem.externalId}` : ""}: ${problem.path || "(row)"}: ${problem.message}`);
    }
    if (problems.length > 20) console.log(`  … and ${count(problems.length - 20)} more: see the Ingest log, which lists each batch's rejected rows.`);
    return totals.rejected + totals.conflict > 0 ? 1 : 0;
  });
});
