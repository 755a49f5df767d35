import { describe, expect, it } from "vitest";
import { priorityValue, type QueueOrderMode } from "@/lib/risk/queue-priority";
import { seededRandom } from "./seeded-random";

interface Job {
  expectedLossMinor: number;
  expectedHandlingMinutes: number;
}

// Total weighted completion time Σ w_j·C_j of working the jobs in the given order, with w = EL and
// processing time = handling minutes: the objective of Smith 1956.
function weightedCompletionTime(jobs: readonly Job[]): number {
  let clock = 0;
  let total = 0;
  for (const job of jobs) {
    clock += job.expectedHandlingMinutes;
    total += job.expectedLossMinor * clock;
  }
  return total;
}

function permutations<T>(items: readonly T[]): T[][] {
  if (items.length <= 1) return [[...items]];
  return items.flatMap((item, i) => permutations([...items.slice(0, i), ...items.slice(i + 1)]).map((rest) => [item, ...rest]));
}

function byPriority(jobs: readonly Job[], orderMode: QueueOrderMode): Job[] {
  return [...jobs].sort((a, b) => priorityValue({ ...b, orderMode }) - priorityValue({ ...a, orderMode }));
}

describe("queue priority", () => {
  it("is the expected loss, or expected loss per handling minute", () => {
    // Hand-worked: EL 1000 over 50 minutes is 20 per minute.
    expect(priorityValue({ expectedLossMinor: 1_000, expectedHandlingMinutes: 50, orderMode: "expected_loss" })).toBe(1_000);
    expect(priorityValue({ expectedLossMinor: 1_000, expectedHandlingMinutes: 50, orderMode: "loss_per_minute" })).toBe(20);
  });

  it("Smith's rule beats plain expected-loss order when handling times differ (hand-worked)", () => {
    // A: EL 1000, 50 min (20/min). B: EL 600, 10 min (60/min).
    // EL order A, B: completions 50 and 60 → 1000·50 + 600·60 = 50 000 + 36 000 = 86 000.
    // Smith order B, A: completions 10 and 60 → 600·10 + 1000·60 = 6 000 + 60 000 = 66 000.
    const a = { expectedLossMinor: 1_000, expectedHandlingMinutes: 50 };
    const b = { expectedLossMinor: 600, expectedHandlingMinutes: 10 };
    expect(byPriority([a, b], "expected_loss")).toEqual([a, b]);
    expect(byPriority([a, b], "loss_per_minute")).toEqual([b, a]);
    expect(weightedCompletionTime([a, b])).toBe(86_000);
    expect(weightedCompletionTime([b, a])).toBe(66_000);
  });

  it("ordering by loss per minute minimises total weighted completion time (Smith 1956)", () => {
    // Smith 1956, "Various optimizers for single-stage production", Naval Research Logistics
    // Quarterly 3: on one machine, sequencing by w_j / p_j descending minimises Σ w_j·C_j.
    // Checked against exhaustive search over all orders of up to six random jobs.
    const random = seededRandom(1956);
    for (let round = 0; round < 200; round++) {
      const n = 2 + Math.floor(random() * 5);
      const jobs = Array.from({ length: n }, () => ({
        expectedLossMinor: Math.floor(random() * 50_000),
        expectedHandlingMinutes: 1 + Math.floor(random() * 60),
      }));
      const best = Math.min(...permutations(jobs).map(weightedCompletionTime));
      expect(weightedCompletionTime(byPriority(jobs, "loss_per_minute"))).toBe(best);
    }
  });

  it("rejects impossible inputs", () => {
    const ok = { expectedLossMinor: 100, expectedHandlingMinutes: 5, orderMode: "expected_loss" as const };
    expect(() => priorityValue({ ...ok, expectedLossMinor: -1 })).toThrow(RangeError);
    expect(() => priorityValue({ ...ok, expectedLossMinor: Number.NaN })).toThrow(RangeError);
    expect(() => priorityValue({ ...ok, expectedHandlingMinutes: 0 })).toThrow(/expectedHandlingMinutes/);
    expect(() => priorityValue({ ...ok, orderMode: "loss_per_minute", expectedHandlingMinutes: 0 })).toThrow(RangeError);
    expect(() => priorityValue({ ...ok, orderMode: "score" as QueueOrderMode })).toThrow(/orderMode/);
  });
});
