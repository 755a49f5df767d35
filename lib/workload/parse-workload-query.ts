// The Workload and Capacity planner screens and their API routes read the same query strings. A bad
// value is an invalid_input that names its parameter.
import type { z } from "zod";
import { AppError } from "@/lib/errors";
import { capacityQuerySchema, workloadQuerySchema, type CapacityQuery, type WorkloadQuery } from "@/lib/workload/schemas";

export type SearchParamsInput = URLSearchParams | Record<string, string | string[] | undefined>;

function firstValues(input: SearchParamsInput, keys: readonly string[]): Record<string, string | string[]> {
  const all = (key: string): string[] => {
    if (input instanceof URLSearchParams) return input.getAll(key);
    const value = input[key];
    return Array.isArray(value) ? value : value === undefined ? [] : [value];
  };
  const plain: Record<string, string | string[]> = {};
  for (const key of keys) {
    const values = all(key).filter((value) => value !== "");
    if (values.length > 0) plain[key] = key === "modelVersionId" ? values : values[0];
  }
  return plain;
}

function parseOrThrow<T>(schema: z.ZodType<T>, value: unknown, what: string): T {
  const parsed = schema.safeParse(value);
  if (parsed.success) return parsed.data;
  const issues = parsed.error.issues.map((issue) => ({ path: issue.path.join("."), message: issue.message }));
  throw new AppError("invalid_input", `The ${what} is not valid: ${issues.map((issue) => `${issue.path}: ${issue.message}`).join("; ")}`, issues);
}

export function parseWorkloadQuery(input: SearchParamsInput): WorkloadQuery {
  return parseOrThrow(workloadQuerySchema, firstValues(input, ["horizonHours", "days"]), "workload query");
}

export function parseCapacityQuery(input: SearchParamsInput): CapacityQuery {
  return parseOrThrow(capacityQuerySchema, firstValues(input, ["capacity", "analysts", "hours", "handlingMinutes", "days", "modelVersionId"]), "capacity query");
}
