// Small helpers of `npm run bench`: timing, percentiles, the machine description and the table.
import os from "node:os";

/** Milliseconds since `start` (a process.hrtime.bigint() reading). */
export function elapsedMs(start: bigint): number {
  return Number(process.hrtime.bigint() - start) / 1e6;
}

export async function timed<T>(work: () => Promise<T>): Promise<{ value: T; ms: number }> {
  const start = process.hrtime.bigint();
  const value = await work();
  return { value, ms: elapsedMs(start) };
}

/** Nearest-rank percentile of `values` (p in 0..100); NaN for an empty list. */
export function percentile(values: readonly number[], p: number): number {
  if (values.length === 0) return Number.NaN;
  const sorted = [...values].sort((a, b) => a - b);
  const rank = Math.min(sorted.length, Math.max(1, Math.ceil((p / 100) * sorted.length)));
  return sorted[rank - 1];
}

export interface LatencySummary {
  runs: number;
  p50Ms: number;
  p95Ms: number;
  p99Ms: number;
  maxMs: number;
}

export function summarize(latencies: readonly number[]): LatencySummary {
  const round = (value: number) => Number(value.toFixed(2));
  return {
    runs: latencies.length,
    p50Ms: round(percentile(latencies, 50)),
    p95Ms: round(percentile(latencies, 95)),
    p99Ms: round(percentile(latencies, 99)),
    maxMs: round(Math.max(...latencies)),
  };
}

/** Latencies of `runs` timed calls of `work` after `warmup` untimed ones; `prepare` runs untimed before each timed call. */
export async function repeat(runs: number, work: () => Promise<unknown>, warmup = 1, prepare?: () => Promise<unknown>): Promise<number[]> {
  for (let index = 0; index < warmup; index += 1) await work();
  const latencies: number[] = [];
  for (let index = 0; index < runs; index += 1) {
    if (prepare) await prepare();
    const start = process.hrtime.bigint();
    await work();
    latencies.push(elapsedMs(start));
  }
  return latencies;
}

export interface MachineInfo {
  cpuModel: string;
  cpuCount: number;
  totalMemoryGiB: number;
  platform: string;
  node: string;
  postgres?: string;
  loadAverageStart: number[];
  loadAverageEnd?: number[];
}

export function describeMachine(): MachineInfo {
  const cpus = os.cpus();
  return {
    cpuModel: cpus[0]?.model.trim() ?? "unknown",
    cpuCount: cpus.length,
    totalMemoryGiB: Number((os.totalmem() / 2 ** 30).toFixed(1)),
    platform: `${os.platform()} ${os.release()} ${os.arch()}`,
    node: process.version,
    loadAverageStart: os.loadavg().map((value) => Number(value.toFixed(2))),
  };
}

/** One printed line: what was measured, the figure, the target, met or missed. */
export interface BenchRow {
  section: string;
  measure: string;
  figure: string;
  target?: string;
  /** true met, false missed, undefined when there is no target for this figure. */
  met?: boolean;
}

export function formatTable(rows: readonly BenchRow[]): string {
  const verdict = (row: BenchRow) => (row.met === undefined ? "" : row.met ? "met" : "MISSED");
  const columns: [string, (row: BenchRow) => string][] = [
    ["section", (row) => row.section],
    ["measure", (row) => row.measure],
    ["figure", (row) => row.figure],
    ["target (at 1M alerts)", (row) => row.target ?? ""],
    ["", verdict],
  ];
  const widths = columns.map(([title, get]) => Math.max(title.length, ...rows.map((row) => get(row).length)));
  const line = (cells: string[]) => cells.map((cell, index) => cell.padEnd(widths[index])).join("  ").trimEnd();
  return [line(columns.map(([title]) => title)), line(widths.map((width) => "-".repeat(width))), ...rows.map((row) => line(columns.map(([, get]) => get(row))))].join("\n");
}

export const ms = (value: number) => `${value.toFixed(value < 10 ? 2 : 1)} ms`;
export const perSecond = (value: number, unit: string) => `${Math.round(value).toLocaleString("en")} ${unit}/s`;
