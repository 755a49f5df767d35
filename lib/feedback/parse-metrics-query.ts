// The metrics screens and API routes read the same query string: a window, and for model health the
// model versions and drift windows. A bad value is an invalid_input that names its parameter.
import type { z } from "zod";
import { AppError } from "@/lib/errors";
import {
  modelVersionMetricsQuerySchema,
  windowQuerySchema,
  type ModelVersionMetricsQuery,
  type WindowQuery,
} from "@/lib/feedback/schemas";

export type SearchParamsInput = URLSearchParams | Record<string, string | string[] | undefined>;

/** Every parameter as a list of its values (a URL may repeat one). Empty values count as absent. */
function valuesOf(input: SearchParamsInput): Map<string, string[]> {
  const values = new Map<string, string[]>();
  const add = (key: string, value: string) => {
    if (value === "") return;
    values.set(key, [...(values.get(key) ?? []), value]);
  };
  if (input instanceof URLSearchParams) {
    for (const [key, value] of input) add(key, value);
  } else {
    for (const [key, value] of Object.entries(input)) {
      for (const one of Array.isArray(value) ? value : value === undefined ? [] : [value]) add(key, one);
    }
  }
  return values;
}

function parseOrThrow<T>(schema: z.ZodType<T>, value: unknown, what: string): T {
  const parsed = schema.safeParse(value);
  if (parsed.success) return parsed.data;
  const issues = parsed.error.issues.map((issue) => ({ path: issue.path.join("."), message: issue.message }));
  throw new AppError("invalid_input", `The ${what} is not valid: ${issues.map((issue) => `${issue.path}: ${issue.message}`).join("; ")}`, issues);
}

const windowKeys = ["window", "date", "from", "to", "bucket"] as const;

export function parseWindowQuery(input: SearchParamsInput): WindowQuery {
  const values = valuesOf(input);
  const plain: Record<string, string> = {};
  for (const key of windowKeys) {
    const given = values.get(key);
    if (given) plain[key] = given[0];
  }
  return parseOrThrow(windowQuerySchema, plain, "metrics window");
}

export function parseModelVersionMetricsQuery(input: SearchParamsInput): WindowQuery & ModelVersionMetricsQuery {
  const window = parseWindowQuery(input);
  const values = valuesOf(input);
  const rest = parseOrThrow(
    modelVersionMetricsQuerySchema,
    {
      modelVersionId: values.get("modelVersionId") ?? [],
      driftCurrentDays: values.get("driftCurrentDays")?.[0],
      driftReferenceDays: values.get("driftReferenceDays")?.[0],
    },
    "model health query",
  );
  return { ...window, ...rest };
}

/**
 * A screen's filter form sends every field, filled or not: keep only the ones that go with the
 * chosen window (date for a day or week, from and to for a custom range) so that switching the
 * window does not turn into an error about the fields left behind. The API stays strict.
 */
export function formWindowInput(input: Record<string, string | string[] | undefined>): Record<string, string | string[] | undefined> {
  const chosen = Array.isArray(input.window) ? input.window[0] : input.window;
  const { date, from, to, ...rest } = input;
  return chosen === "day" || chosen === "week" ? { ...rest, date } : { ...rest, from, to };
}

/** The window part of a query string, in a fixed order, for links that keep the reader's window. */
export function windowQueryEntries(query: WindowQuery): [string, string][] {
  const entries: [string, string][] = [];
  if (query.window !== "custom") entries.push(["window", query.window]);
  for (const key of ["date", "from", "to", "bucket"] as const) {
    const value = query[key];
    if (value !== undefined) entries.push([key, value]);
  }
  return entries;
}
