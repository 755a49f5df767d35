// One error class for expected failures. Route handlers map `code` to an HTTP status with
// httpStatusOf(); command-line tools print the message on one line and exit non-zero.

export const errorCodes = [
  "not_found",
  "forbidden",
  "unauthenticated",
  "conflict",
  "invalid_input",
  "too_large",
  "unsupported_media_type",
  "rate_limited",
  "unavailable",
] as const;

export type ErrorCode = (typeof errorCodes)[number];

const statusByCode: Record<ErrorCode, number> = {
  not_found: 404,
  forbidden: 403,
  unauthenticated: 401,
  conflict: 409,
  invalid_input: 400,
  too_large: 413,
  unsupported_media_type: 415,
  rate_limited: 429,
  unavailable: 503,
};

export interface FieldIssue {
  path: string;
  message: string;
  row?: number;
}

export class AppError extends Error {
  readonly code: ErrorCode;
  readonly issues: FieldIssue[];

  constructor(code: ErrorCode, message: string, issues: FieldIssue[] = []) {
    super(message);
    this.name = "AppError";
    this.code = code;
    this.issues = issues;
  }
}

export function httpStatusOf(code: ErrorCode): number {
  return statusByCode[code];
}

export function isAppError(error: unknown): error is AppError {
  return error instanceof AppError;
}
