"use client";
// Upload of a CSV (with a header row), NDJSON or JSON file of alerts, labels or outcomes. The file is
// parsed here, in the browser, and sent in requests of up to 2,000 rows to the same routes the
// scoring service uses (as this person's session), so large files show progress and each request
// stays well under the size limits. Each request is one batch in the log; rows are numbered from the
// start of the file in every answer.
import { useRouter } from "next/navigation";
import { useId, useState, type FormEvent } from "react";
import type { IngestKind, IngestProblem } from "@/lib/ingest/ingest-batch";
import { csvRecordToAlertInput, csvRecordToLabelInput, csvRecordToOutcomeInput, parseCsv, parseJsonArrayBody, parseNdjsonBody } from "@/lib/ingest/parse-body";

const KINDS: { value: IngestKind; label: string }[] = [
  { value: "alerts", label: "Alerts" },
  { value: "labels", label: "Labels (chargebacks, customer reports)" },
  { value: "outcomes", label: "Historical outcomes" },
];
const csvConverters = { alerts: csvRecordToAlertInput, labels: csvRecordToLabelInput, outcomes: csvRecordToOutcomeInput } as const;
const CHUNK_ROWS = 2_000;
const SHOWN_PROBLEMS = 50;

interface Totals {
  accepted: number;
  duplicate: number;
  conflict: number;
  rejected: number;
  unmatched: number;
}

interface Run {
  phase: "running" | "done" | "failed";
  fileName: string;
  rows: number;
  sent: number;
  totals: Totals;
  problems: IngestProblem[];
  batches: number;
  message?: string;
}

type Progress = { phase: "idle" } | Run;

const zero: Totals = { accepted: 0, duplicate: 0, conflict: 0, rejected: 0, unmatched: 0 };

function parseFile(text: string, fileName: string, kind: IngestKind): { ok: true; rows: unknown[]; lineOf: (row: number) => number | null } | { ok: false; message: string } {
  const lower = fileName.toLowerCase();
  const first = text.replace(/^\uFEFF/, "").trimStart()[0];
  if (lower.endsWith(".csv") || (!lower.endsWith(".json") && !lower.endsWith(".ndjson") && !lower.endsWith(".jsonl") && first !== "[" && first !== "{")) {
    const parsed = parseCsv(text);
    return parsed.ok ? { ok: true, rows: parsed.rows.map(csvConverters[kind]), lineOf: (row) => parsed.lineNumbers[row] ?? null } : parsed;
  }
  if (lower.endsWith(".ndjson") || lower.endsWith(".jsonl") || first === "{") {
    const parsed = parseNdjsonBody(text);
    return parsed.ok ? { ok: true, rows: parsed.rows, lineOf: (row) => parsed.lineNumbers[row] ?? null } : parsed;
  }
  const parsed = parseJsonArrayBody(text);
  return parsed.ok ? { ok: true, rows: parsed.rows, lineOf: () => null } : parsed;
}

export function UploadForm({ maxRowsPerRequest }: { maxRowsPerRequest: number }) {
  const router = useRouter();
  const id = useId();
  const [kind, setKind] = useState<IngestKind>("alerts");
  const [progress, setProgress] = useState<Progress>({ phase: "idle" });
  const [lineOf, setLineOf] = useState<(row: number) => number | null>(() => () => null);
  const running = progress.phase === "running";

  async function upload(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const file = (new FormData(event.currentTarget).get("file") as File | null) ?? null;
    if (!file || file.size === 0) {
      setProgress({ phase: "failed", fileName: file?.name ?? "", rows: 0, sent: 0, totals: zero, problems: [], batches: 0, message: "Choose a file first." });
      return;
    }
    const parsed = parseFile(await file.text(), file.name, kind);
    if (!parsed.ok) {
      setProgress({ phase: "failed", fileName: file.name, rows: 0, sent: 0, totals: zero, problems: [], batches: 0, message: `The file cannot be read: ${parsed.message}` });
      return;
    }
    setLineOf(() => parsed.lineOf);
    const rows = parsed.rows;
    const chunk = Math.min(CHUNK_ROWS, maxRowsPerRequest);
    let state: Run = { phase: "running", fileName: file.name, rows: rows.length, sent: 0, totals: { ...zero }, problems: [], batches: 0 };
    setProgress(state);

    for (let offset = 0; offset < rows.length; offset += chunk) {
      const params = new URLSearchParams({ fileName: file.name, firstRow: String(offset) });
      let answer: Record<string, unknown>;
      try {
        const response = await fetch(`/api/v1/${kind}?${params}`, {
          method: "POST",
          headers: { "content-type": "application/json" },
          body: JSON.stringify(rows.slice(offset, offset + chunk)),
        });
        answer = await response.json();
        if (!response.ok) {
          const error = answer.error as { message?: string; requestId?: string } | undefined;
          throw new Error(error?.message ?? `The server answered ${response.status}.`);
        }
      } catch (error) {
        setProgress({ ...state, phase: "failed", message: `Stopped after ${state.sent.toLocaleString("en")} rows: ${(error as Error).message}` });
        router.refresh();
        return;
      }
      const totals = { ...state.totals };
      for (const key of ["accepted", "duplicate", "conflict", "rejected", "unmatched"] as const) totals[key] += Number(answer[key] ?? 0);
      const problems = [...state.problems, ...((answer.errors as IngestProblem[]) ?? []), ...((answer.conflicts as IngestProblem[]) ?? [])].slice(0, SHOWN_PROBLEMS);
      state = { ...state, sent: Math.min(offset + chunk, rows.length), totals, problems, batches: state.batches + 1 };
      setProgress(state);
    }
    setProgress({ ...state, phase: "done" });
    router.refresh();
  }

  return (
    <form onSubmit={upload} className="space-y-3" aria-describedby={`${id}-help`}>
      <h2 className="font-semibold">Upload a file</h2>
      <p id={`${id}-help`} className="text-sm text-ink-soft">
        CSV with a header row naming the fields (as in the API), NDJSON (one JSON object per line) or a JSON array. The same checks apply as for the API;
        rows with a full card number are refused. Large files are sent in parts of {Math.min(CHUNK_ROWS, maxRowsPerRequest).toLocaleString("en")} rows, each a
        batch of its own; sending the same file again is safe (repeats count as duplicates).
      </p>
      <div className="flex flex-wrap items-end gap-3">
        <label className="flex flex-col gap-1 text-sm">
          <span>Rows in the file</span>
          <select className="field" value={kind} onChange={(event) => setKind(event.target.value as IngestKind)} disabled={running} name="kind">
            {KINDS.map((option) => (
              <option key={option.value} value={option.value}>
                {option.label}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1 text-sm">
          <span>File to upload</span>
          <input className="field" type="file" name="file" accept=".csv,.ndjson,.jsonl,.json,text/csv,application/json" required disabled={running} />
        </label>
        <button type="submit" className="btn btn-primary" disabled={running}>
          {running ? "Uploading…" : "Upload"}
        </button>
      </div>

      {progress.phase !== "idle" && (
        <div className="space-y-2" aria-live="polite">
          {progress.rows > 0 && (
            <div className="flex items-center gap-3 text-sm">
              <progress className="h-2 w-64 accent-accent" max={progress.rows} value={progress.sent} aria-label={`Rows sent from ${progress.fileName}`} />
              <span className="num">
                {progress.sent.toLocaleString("en")} / {progress.rows.toLocaleString("en")} rows
              </span>
            </div>
          )}
          {progress.rows > 0 && (
            <p className="text-sm" role="status">
              <strong>{progress.phase === "done" ? "Done" : progress.phase === "failed" ? "Stopped" : "So far"}:</strong> {progress.totals.accepted.toLocaleString("en")} accepted,{" "}
              {progress.totals.duplicate.toLocaleString("en")} duplicate, {progress.totals.conflict.toLocaleString("en")} conflict,{" "}
              {progress.totals.rejected.toLocaleString("en")} rejected
              {kind === "labels" && progress.totals.unmatched > 0 ? `, ${progress.totals.unmatched.toLocaleString("en")} waiting for their alert` : ""}
              {progress.phase === "done" ? ` in ${progress.batches} batch${progress.batches === 1 ? "" : "es"}.` : "."}
            </p>
          )}
          {progress.message && (
            <p className="text-sm font-semibold text-overdue" role="alert">
              {progress.message}
            </p>
          )}
          {progress.problems.length > 0 && (
            <div className="overflow-x-auto">
              <table className="data-table" aria-label="Rows not accepted">
                <thead>
                  <tr>
                    <th className="num">Row</th>
                    <th className="num">Line</th>
                    <th>External id</th>
                    <th>Field</th>
                    <th>Reason</th>
                  </tr>
                </thead>
                <tbody>
                  {progress.problems.map((problem, index) => (
                    <tr key={`${problem.row}-${problem.path}-${index}`}>
                      <td className="num">{problem.row}</td>
                      <td className="num">{lineOf(problem.row) ?? "—"}</td>
                      <td className="font-mono text-xs">{problem.externalId ?? "—"}</td>
                      <td className="font-mono text-xs">{problem.path || "(row)"}</td>
                      <td>{problem.message}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
              {progress.totals.rejected + progress.totals.conflict > progress.problems.length && (
                <p className="mt-1 text-xs text-ink-soft">The first {SHOWN_PROBLEMS} are shown; each batch in the log below has the full list as CSV.</p>
              )}
            </div>
          )}
        </div>
      )}
    </form>
  );
}
