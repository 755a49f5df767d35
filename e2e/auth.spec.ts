// Sign-in and roles in a real browser, against the demo build (e2e/support/serve-demo.ts).
import { expect, test, type Page } from "@playwright/test";
import { DEMO_PASSWORD, demoSignIns } from "@/demo-data/people";

async function signIn(page: Page, email: string, password = DEMO_PASSWORD): Promise<void> {
  await page.goto("/sign-in");
  await page.getByLabel("Email").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
}

test("an analyst signs in and reaches the queue", async ({ page }) => {
  await signIn(page, demoSignIns.analyst);
  await expect(page).toHaveURL(/\/queue$/);
  await expect(page.getByRole("heading", { level: 1, name: "Queue" })).toBeVisible();
  const nav = page.getByRole("navigation", { name: "Main" });
  await expect(nav.getByRole("link", { name: "Queue" })).toBeVisible();
  // Only the pages an analyst may open are offered.
  await expect(nav.getByRole("link", { name: "Users" })).toHaveCount(0);
  await expect(nav.getByRole("link", { name: "API clients" })).toHaveCount(0);
  await expect(page.getByText("analyst", { exact: true })).toBeVisible();
});

test("a wrong password gets a plain message and keeps the typed email", async ({ page }) => {
  await signIn(page, demoSignIns.secondAnalyst, "not the password");
  // Next's route announcer is an (empty) alert too; pick ours by its text.
  await expect(page.getByRole("alert").filter({ hasText: "The email or password is not right." })).toBeVisible();
  await expect(page.getByLabel("Email")).toHaveValue(demoSignIns.secondAnalyst);
  await expect(page.getByLabel("Password")).toHaveValue("");
});

test("an analyst opening an admin page gets a plain 'not allowed' page", async ({ page }) => {
  await signIn(page, demoSignIns.analyst);
  await expect(page.getByRole("heading", { level: 1, name: "Queue" })).toBeVisible();
  await page.goto("/admin/users");
  await expect(page.getByRole("heading", { level: 1, name: "Not allowed" })).toBeVisible();
  await expect(page.getByText("Your role (analyst) does not include this page.")).toBeVisible();
  await expect(page.getByRole("table", { name: "People who can sign in" })).toHaveCount(0);
});

test("without a session, a page sends you to sign in and back afterwards", async ({ page }) => {
  await page.goto("/admin/users");
  await expect(page).toHaveURL(/\/sign-in\?next=%2Fadmin%2Fusers$/);
  await page.getByLabel("Email").fill(demoSignIns.admin);
  await page.getByLabel("Password").fill(DEMO_PASSWORD);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("heading", { level: 1, name: "Users" })).toBeVisible();
});

test("an auditor sees the queue but no control that changes alerts", async ({ page }) => {
  await signIn(page, demoSignIns.auditor);
  await expect(page.getByRole("heading", { level: 1, name: "Queue" })).toBeVisible();
  const main = page.getByRole("main");
  for (const name of [/take next/i, /claim/i, /release/i, /record/i, /confirm/i, /reassign/i, /close/i, /save/i]) {
    await expect(main.getByRole("button", { name })).toHaveCount(0);
  }
  // The queue's filters are a GET form: they change the view, not an alert. Every other field counts.
  const changing = main.locator('form:not([method="get"])');
  await expect(changing.getByRole("textbox")).toHaveCount(0);
  await expect(changing.getByRole("combobox")).toHaveCount(0);
  await expect(main.getByRole("radio")).toHaveCount(0);
  await expect(main.getByRole("form", { name: "Filter the waiting alerts" })).toBeVisible();
});

test("signing out ends the session: the back button does not bring the queue back", async ({ page }) => {
  await signIn(page, demoSignIns.supervisor);
  await expect(page.getByRole("heading", { level: 1, name: "Queue" })).toBeVisible();
  await page.getByRole("button", { name: "Sign out" }).click();
  await expect(page).toHaveURL(/\/sign-in$/);
  await page.goto("/queue");
  await expect(page).toHaveURL(/\/sign-in/);
  await expect(page.getByRole("heading", { name: "Sign in" })).toBeVisible();
});
