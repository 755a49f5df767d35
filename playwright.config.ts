import { existsSync } from "node:fs";
import { defineConfig, devices } from "@playwright/test";

// Browser tests run against a production build (`npm run test:e2e` builds first) served by
// e2e/support/serve-demo.ts on a fresh embedded database loaded with the demo scenario.
const port = Number(process.env.E2E_PORT ?? 3100);
const chromium = process.env.CHROMIUM_PATH ?? (existsSync("/usr/bin/chromium") ? "/usr/bin/chromium" : undefined);

export default defineConfig({
  testDir: "e2e",
  outputDir: "test-results",
  fullyParallel: false,
  workers: 1,
  retries: 0,
  timeout: 60_000,
  expect: { timeout: 15_000 },
  reporter: [["list"]],
  use: {
    baseURL: `http://127.0.0.1:${port}`,
    trace: "retain-on-failure",
    screenshot: "only-on-failure",
  },
  projects: [
    {
      name: "chromium",
      use: {
        ...devices["Desktop Chrome"],
        launchOptions: {
          executablePath: chromium,
          args: [
            "--no-sandbox",
            "--disable-gpu",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--no-first-run",
          ],
        },
      },
    },
  ],
  webServer: {
    command: "npx tsx --conditions=react-server e2e/support/serve-demo.ts",
    url: `http://127.0.0.1:${port}/sign-in`,
    env: { E2E_PORT: String(port) },
    timeout: 600_000,
    reuseExistingServer: false,
    stdout: "pipe",
    stderr: "pipe",
    gracefulShutdown: { signal: "SIGTERM", timeout: 15_000 },
  },
});
