// The one place that reads and validates the app's environment settings (OWASP ASVS 5.0 §13.1,
// configuration documentation; from memory). `instrumentation.ts` calls loadEnv() when the server
// starts, so a bad value stops the start with one line per problem instead of surfacing later.
//
// Sessions need no server secret: the cookie carries a random token and only its SHA-256 is
// looked up in PostgreSQL, so there is no signing key to leak, rotate or forget to set.
//
// Variables (the README lists these):
//   NODE_ENV                        development | production | test. "production" turns on the
//                                   Secure attribute of the session cookie.
//   DATABASE_URL                    postgres:// URL of the app's database. Unset: the embedded
//                                   server under TRIAGE_DATA_DIR (as started by `npm run demo`).
//   TRIAGE_DATA_DIR                 Folder of the embedded PostgreSQL server (default .data/pg).
//   TRIAGE_PG_PORT                  Preferred port of the embedded server (default 54329).
//   TRIAGE_SESSION_IDLE_MINUTES     A session ends after this long without a request (default 30).
//   TRIAGE_SESSION_LIFETIME_HOURS   A session ends this long after sign-in, active or not (default 12).
//   NEXT_SERVER_ACTIONS_ENCRYPTION_KEY  Optional; set the same base64 key (16, 24 or 32 bytes) on
//                                   every instance when running more than one behind a load balancer.
import { z } from "zod";

const wholeNumber = (what: string, min: number, max: number) =>
  z
    .string()
    .regex(/^\d+$/, `expected a whole number of ${what} between ${min} and ${max}`)
    .transform(Number)
    .pipe(z.number().int().min(min, `expected at least ${min} ${what}`).max(max, `expected at most ${max} ${what}`));

const envSchema = z
  .object({
    NODE_ENV: z.enum(["development", "production", "test"], "expected development, production or test").default("development"),
    DATABASE_URL: z.string().regex(/^postgres(ql)?:\/\/\S+$/, "expected a postgres:// or postgresql:// URL").optional(),
    TRIAGE_DATA_DIR: z.string().min(1).optional(),
    TRIAGE_PG_PORT: wholeNumber("port", 1, 65535).optional(),
    TRIAGE_SESSION_IDLE_MINUTES: wholeNumber("minutes", 1, 24 * 60).default(30),
    TRIAGE_SESSION_LIFETIME_HOURS: wholeNumber("hours", 1, 7 * 24).default(12),
    NEXT_SERVER_ACTIONS_ENCRYPTION_KEY: z
      .string()
      .refine((value) => [16, 24, 32].includes(Buffer.from(value, "base64").length) && /^[A-Za-z0-9+/]+=*$/.test(value), "expected a base64 key of 16, 24 or 32 bytes")
      .optional(),
  })
  .refine((env) => !(typeof env.TRIAGE_SESSION_IDLE_MINUTES === "number" && typeof env.TRIAGE_SESSION_LIFETIME_HOURS === "number") || env.TRIAGE_SESSION_IDLE_MINUTES <= env.TRIAGE_SESSION_LIFETIME_HOURS * 60, {
    path: ["TRIAGE_SESSION_IDLE_MINUTES"],
    message: "must not be longer than TRIAGE_SESSION_LIFETIME_HOURS",
  });

export type Env = z.infer<typeof envSchema>;

const readVariables = Object.keys(envSchema.shape) as (keyof Env)[];

/** Validates the given variables (default: process.env). Empty values count as unset. Throws one
 * Error whose message names every bad variable and what was expected, never echoing a value. */
export function loadEnv(source: Record<string, string | undefined> = process.env): Env {
  const picked: Record<string, string> = {};
  for (const name of readVariables) {
    const value = source[name];
    if (value !== undefined && value.trim() !== "") picked[name] = value.trim();
  }
  const parsed = envSchema.safeParse(picked);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((issue) => `  ${issue.path.join(".") || "environment"}: ${issue.message}`);
    throw new Error(`Environment settings are not valid:\n${lines.join("\n")}`);
  }
  return parsed.data;
}

let cached: Env | undefined;

/** The validated settings of this process, read once. */
export function env(): Env {
  cached ??= loadEnv();
  return cached;
}
