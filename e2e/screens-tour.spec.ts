// A walk through every screen on the demo data, once as each role: every link of the main menu the
// role is given, plus the screens reached from them (an alert, the capacity planner, the account).
// Fails on any error in the browser console or uncaught page error, and on a screen that answers
// "Not allowed" to a role its menu offered it to. A full-page screenshot of each screen is saved
// under e2e/artifacts/screens/<role>/ (and attached to the test report) for people evaluating the tool.
import { mkdirSync } from "node:fs";
import path from "node:path";
import { expect, test, type Page, type TestInfo } from "@playwright/test";
import { DEMO_PASSWORD, demoSignIns } from "@/demo-data/people";
import type { Role } from "@/lib/auth/permissions";

// Ten or so screens per role, each rendered from the demo's twenty thousand alerts.
test.describe.configure({ timeout: 300_000 });

const SCREENS = "e2e/artifacts/screens";

/** The main menu each role should see, in order (app/(desk)/layout.tsx, from lib/auth/permissions). */
const menuByRole: Record<Role, string[]> = {
  analyst: ["Queue", "Model health"],
  supervisor: ["Queue", "Workload", "Model health", "Reviewer quality", "Audit trail", "Label exports", "Ingest log", "Settings"],
  admin: ["Queue", "Workload", "Model health", "Audit trail", "Label exports", "Ingest log", "Settings", "Users", "API clients"],
  auditor: ["Queue", "Workload", "Model health", "Reviewer quality", "Audit trail", "Label exports", "Ingest log", "Settings"],
};

/** Where each menu entry leads, written out here rather than read from the app under test. */
const pathOf: Record<string, string> = {
  Queue: "/queue",
  Workload: "/workload",
  "Model health": "/model-health",
  "Reviewer quality": "/reviewer-quality",
  "Audit trail": "/audit",
  "Label exports": "/label-exports",
  "Ingest log": "/ingest",
  Settings: "/settings",
  Users: "/admin/users",
  "API clients": "/admin/api-clients",
};

/** Collects what the browser reports as errors: console errors and exceptions nobody caught. */
function watchForErrors(page: Page): string[] {
  const errors: string[] = [];
  page.on("console", (message) => {
    if (message.type() === "error") errors.push(`console: ${message.text()} (${page.url()})`);
  });
  page.on("pageerror", (error) => errors.push(`page error: ${error.message} (${page.url()})`));
  return errors;
}

function slug(text: string): string {
  return text.toLowerCase().replace(/[^a-z0-9]+/g, "-").replace(/^-|-$/g, "");
}

/** Waits for the screen to settle, checks it rendered its own heading, and saves a screenshot. */
async function capture(page: Page, testInfo: TestInfo, folder: string, index: number, name: string): Promise<string> {
  // A screen streams in behind its loading state (app/(desk)/**/loading.tsx: a heading "…-loading-heading"
  // or a busy placeholder): wait until the real screen has replaced it.
  await expect(page.locator('[id$="-loading-heading"], main [aria-busy="true"]')).toHaveCount(0, { timeout: 60_000 });
  await page.waitForLoadState("networkidle");
  const heading = page.getByRole("main").getByRole("heading", { level: 1 }).first();
  await expect(heading).toBeVisible();
  const headingText = (await heading.textContent())?.trim() ?? "";
  expect(headingText, `${name} answered "Not allowed"`).not.toBe("Not allowed");
  const file = path.join(folder, `${String(index).padStart(2, "0")}-${slug(name)}.png`);
  await page.screenshot({ path: file, fullPage: true });
  await testInfo.attach(`${path.basename(folder)} · ${name}`, { path: file, contentType: "image/png" });
  return headingText;
}

test("the sign-in screen renders without browser errors", async ({ page }, testInfo) => {
  const errors = watchForErrors(page);
  const folder = path.join(SCREENS, "signed-out");
  mkdirSync(folder, { recursive: true });
  await page.goto("/sign-in");
  await expect(page.getByRole("button", { name: "Sign in" })).toBeVisible();
  await page.waitForLoadState("networkidle");
  const file = path.join(folder, "01-sign-in.png");
  await page.screenshot({ path: file, fullPage: true });
  await testInfo.attach("signed-out · Sign in", { path: file, contentType: "image/png" });
  expect(errors).toEqual([]);
});

for (const role of Object.keys(menuByRole) as Role[]) {
  test(`every screen as the ${role}, with no error in the browser console`, async ({ page }, testInfo) => {
    const errors = watchForErrors(page);
    const folder = path.join(SCREENS, role);
    mkdirSync(folder, { recursive: true });

    await page.goto("/sign-in");
    await page.getByLabel("Email").fill(demoSignIns[role]);
    await page.getByLabel("Password").fill(DEMO_PASSWORD);
    await page.getByRole("button", { name: "Sign in" }).click();
    await expect(page).toHaveURL(/\/queue/);

    // The menu offers exactly the role's screens, in order.
    const menu = page.getByRole("navigation", { name: "Main" });
    await expect(menu.getByRole("link")).toHaveText(menuByRole[role]);

    let index = 0;
    const visited: string[] = [];
    for (const label of menuByRole[role]) {
      await menu.getByRole("link", { name: label, exact: true }).click();
      await expect(page).toHaveURL((url) => url.pathname === pathOf[label]);
      visited.push(await capture(page, testInfo, folder, ++index, label));

      if (label === "Queue") {
        // An alert from the live queue: the page analysts spend their day on.
        const firstAlert = page.getByRole("main").locator('a[href^="/alerts/"]').first();
        await expect(firstAlert).toBeVisible();
        await firstAlert.click();
        await expect(page).toHaveURL(/\/alerts\/[0-9a-f-]{36}/);
        visited.push(await capture(page, testInfo, folder, ++index, "Alert"));
      }
      if (label === "Workload") {
        await page.getByRole("main").locator('a[href="/workload/capacity"]').first().click();
        await expect(page).toHaveURL(/\/workload\/capacity/);
        visited.push(await capture(page, testInfo, folder, ++index, "Capacity planner"));
      }
    }

    await page.getByRole("link", { name: /^Your account:/ }).click();
    await expect(page).toHaveURL(/\/account/);
    visited.push(await capture(page, testInfo, folder, ++index, "Account"));

    // Every screen showed a heading of its own: no two menu entries led to the same page.
    expect(new Set(visited).size).toBe(visited.length);
    expect(errors).toEqual([]);
  });
}
