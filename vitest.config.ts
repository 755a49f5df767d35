import path from "node:path";
import { defineConfig } from "vitest/config";

// Two projects: pure unit tests run without a database; integration tests share one
// PostgreSQL server per run (started in globalSetup) and each file clones its own database.
const alias = {
  "@": path.resolve(__dirname),
  // Domain modules are marked server-only for Next; under Vitest they run on the server anyway.
  "server-only": path.resolve(__dirname, "tests/support/empty-module.ts"),
};

export default defineConfig({
  test: {
    projects: [
      {
        resolve: { alias },
        test: {
          name: "unit",
          include: ["tests/**/*.test.ts"],
          exclude: ["tests/**/*.integration.test.ts"],
          setupFiles: ["tests/support/fail-on-console-error.ts"],
        },
      },
      {
        resolve: { alias },
        test: {
          name: "integration",
          include: ["tests/**/*.integration.test.ts"],
          globalSetup: ["tests/support/global-database.ts"],
          setupFiles: ["tests/support/fail-on-console-error.ts"],
          testTimeout: 60_000,
          hookTimeout: 120_000,
        },
      },
    ],
  },
});
