// Validating ingest rows one by one: the card-number guard first, then the row's zod schema. A row either
// becomes a valid value or yields errors naming its 0-based index in the request, the field path and what
// was expected. No error ever contains a submitted value.
import { z } from "zod";
import { findCardNumbers, formatFieldPath } from "@/lib/ingest/card-number-guard";

export interface ValidRow<T> {
  /** 0-based index of the row in the request. */
  row: number;
  value: T;
}

export interface RowError {
  /** 0-based index of the row in the request. */
  row: number;
  /** Field path such as `reasonCodes[0].code`; "" for the row as a whole. */
  path: string;
  message: string;
}

export interface ValidateRowsOptions {
  /** Keep at most this many errors (rows are still all validated); default: keep all. */
  maxErrors?: number;
}

export interface ValidateRowsResult<T> {
  valid: ValidRow<T>[];
  errors: RowError[];
  /** True when errors were dropped because of `maxErrors`. */
  errorsTruncated: boolean;
}

/** The message for a field that looks like a full card number; `masked` shows at most 6 + 4 digits. */
export function cardNumberMessage(masked: string): string {
  return `looks like a full card number (shown masked: ${masked}); send a token or a masked number instead`;
}

const TYPE_NAMES: Record<string, string> = {
  string: "a string",
  number: "a number",
  int: "a whole number",
  boolean: "true or false",
  object: "an object",
  array: "an array",
  date: "a date",
  bigint: "a big integer",
  null: "null",
};

function describeInput(input: unknown): string {
  if (input === null) return "null";
  if (Array.isArray(input)) return "an array";
  if (typeof input === "number") {
    if (Number.isNaN(input)) return "NaN";
    if (!Number.isFinite(input)) return "an infinite number";
    return Number.isInteger(input) ? "a number" : "a fractional number";
  }
  if (typeof input === "boolean") return "true or false";
  if (typeof input === "object") return "an object";
  return `a ${typeof input}`;
}

function plural(count: number | bigint, word: string): string {
  return `${count} ${word}${Number(count) === 1 ? "" : "s"}`;
}

/**
 * Readable messages for zod's built-in issues, passed to `safeParse` as its error map. Schema-level
 * messages (schemas.ts) take precedence over this map. The messages describe what was expected and the
 * type that was received, never the value.
 */
export const readableIssueMessage: z.core.$ZodErrorMap = (issue) => {
  switch (issue.code) {
    case "invalid_type": {
      if (issue.input === undefined) return "required";
      const expected = TYPE_NAMES[issue.expected] ?? issue.expected;
      return `expected ${expected}, received ${describeInput(issue.input)}`;
    }
    case "invalid_value": {
      const values = issue.values.map((v) => String(v));
      return values.length === 1 ? `expected ${values[0]}` : `expected one of ${values.join(", ")}`;
    }
    case "too_small": {
      const min = issue.minimum;
      if (issue.origin === "string") return Number(min) === 1 ? "must not be empty" : `must be at least ${plural(min, "character")}`;
      if (issue.origin === "array" || issue.origin === "set") return `must have at least ${plural(min, "item")}`;
      return issue.inclusive === false ? `must be greater than ${min}` : `must be at least ${min}`;
    }
    case "too_big": {
      const max = issue.maximum;
      if (issue.origin === "string") return `must be at most ${plural(max, "character")}`;
      if (issue.origin === "array" || issue.origin === "set") return `must have at most ${plural(max, "item")}`;
      if (Number(max) === Number.MAX_SAFE_INTEGER) return `must be at most ${max} (the largest whole number JSON carries exactly)`;
      return issue.inclusive === false ? `must be less than ${max}` : `must be at most ${max}`;
    }
    case "invalid_format":
      if (issue.format === "email") return "expected an email address";
      if (issue.format === "datetime") return "expected an ISO 8601 date-time with a UTC offset, e.g. 2025-03-01T14:05:00Z";
      if (issue.format === "regex") return "does not have the expected format";
      return `expected the ${issue.format} format`;
    case "not_multiple_of":
      return `must be a multiple of ${issue.divisor}`;
    case "unrecognized_keys":
      return `unknown ${issue.keys.length === 1 ? "field" : "fields"}: ${issue.keys.join(", ")}`;
    case "invalid_union":
      return "does not match any of the allowed shapes";
    case "invalid_key":
      return "has an invalid key";
    case "invalid_element":
      return "has an invalid element";
    default:
      return undefined;
  }
};

/**
 * Validates each row of a request. The card-number guard runs first on the raw row: a row with any field
 * that looks like a full card number is rejected with one error per such field and is not parsed further.
 * Otherwise the schema parses it, and each zod issue becomes one error with its dotted path.
 */
export function validateRows<S extends z.ZodType>(
  rows: readonly unknown[],
  schema: S,
  options: ValidateRowsOptions = {},
): ValidateRowsResult<z.output<S>> {
  const maxErrors = options.maxErrors ?? Number.POSITIVE_INFINITY;
  const valid: ValidRow<z.output<S>>[] = [];
  const errors: RowError[] = [];
  let errorsTruncated = false;

  const addError = (error: RowError) => {
    if (errors.length < maxErrors) errors.push(error);
    else errorsTruncated = true;
  };

  rows.forEach((raw, row) => {
    const cardNumbers = findCardNumbers(raw);
    if (cardNumbers.length > 0) {
      for (const { path, masked } of cardNumbers) addError({ row, path, message: cardNumberMessage(masked) });
      return;
    }
    const parsed = schema.safeParse(raw, { error: readableIssueMessage });
    if (parsed.success) {
      valid.push({ row, value: parsed.data });
      return;
    }
    for (const issue of parsed.error.issues) {
      addError({ row, path: formatFieldPath(issue.path), message: issue.message });
    }
  });

  return { valid, errors, errorsTruncated };
}
