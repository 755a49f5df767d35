import { afterEach, beforeEach, vi } from "vitest";

// An unexpected console.error usually means a swallowed failure; make it fail the test.
// A test that expects one can call `allowConsoleError()` first.
let allowed = false;
let errors: unknown[][] = [];

export function allowConsoleError(): void {
  allowed = true;
}

beforeEach(() => {
  allowed = false;
  errors = [];
  vi.spyOn(console, "error").mockImplementation((...args: unknown[]) => {
    errors.push(args);
  });
});

afterEach(() => {
  vi.mocked(console.error).mockRestore();
  if (!allowed && errors.length > 0) {
    throw new Error(`Unexpected console.error during the test: ${errors.map((e) => e.map(String).join(" ")).join("\n")}`);
  }
});
