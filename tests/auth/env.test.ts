import { describe, expect, it } from "vitest";
import { loadEnv } from "@/lib/env";

describe("environment settings", () => {
  it("default the session timeouts to 30 minutes idle and 12 hours in all", () => {
    expect(loadEnv({})).toEqual({ NODE_ENV: "development", TRIAGE_SESSION_IDLE_MINUTES: 30, TRIAGE_SESSION_LIFETIME_HOURS: 12 });
  });

  it("treat empty values as unset", () => {
    expect(loadEnv({ DATABASE_URL: " ", TRIAGE_SESSION_IDLE_MINUTES: "" }).TRIAGE_SESSION_IDLE_MINUTES).toBe(30);
  });

  it("name each bad variable with what was expected, without echoing any value", () => {
    const secret = "postgres-password-in-a-mysql-url";
    let message = "";
    try {
      loadEnv({ NODE_ENV: "prod", DATABASE_URL: `mysql://root:${secret}@db/x`, TRIAGE_SESSION_IDLE_MINUTES: "half an hour", TRIAGE_PG_PORT: "70000" });
    } catch (error) {
      message = (error as Error).message;
    }
    expect(message.split("\n")).toEqual([
      "Environment settings are not valid:",
      "  NODE_ENV: expected development, production or test",
      "  DATABASE_URL: expected a postgres:// or postgresql:// URL",
      "  TRIAGE_PG_PORT: expected at most 65535 port",
      "  TRIAGE_SESSION_IDLE_MINUTES: expected a whole number of minutes between 1 and 1440",
    ]);
    expect(message).not.toContain(secret);
  });

  it("refuse an idle timeout longer than the whole session", () => {
    expect(() => loadEnv({ TRIAGE_SESSION_IDLE_MINUTES: "120", TRIAGE_SESSION_LIFETIME_HOURS: "1" })).toThrow(/TRIAGE_SESSION_IDLE_MINUTES: must not be longer than TRIAGE_SESSION_LIFETIME_HOURS/);
  });

  it("accept a well-formed server-actions key and refuse a malformed one", () => {
    const key = Buffer.alloc(32, 7).toString("base64");
    expect(loadEnv({ NEXT_SERVER_ACTIONS_ENCRYPTION_KEY: key }).NEXT_SERVER_ACTIONS_ENCRYPTION_KEY).toBe(key);
    expect(() => loadEnv({ NEXT_SERVER_ACTIONS_ENCRYPTION_KEY: "short" })).toThrow(/base64 key of 16, 24 or 32 bytes/);
  });
});
