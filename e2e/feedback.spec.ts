// The feedback loop in a real browser, against the demo build: a supervisor compares a champion and
// a challenger on Model health and reads Reviewer quality; an analyst may see the first, not the second.
import { expect, test, type Page } from "@playwright/test";
import { DEMO_PASSWORD, demoSignIns } from "@/demo-data/people";

async function signIn(page: Page, email: string): Promise<void> {
  await page.goto("/sign-in");
  await page.getByLabel("Email").fill(email);
  await page.getByLabel("Password").fill(DEMO_PASSWORD);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page).not.toHaveURL(/\/sign-in/);
}

test("a supervisor puts a champion and a challenger side by side, and the choice stays in the URL", async ({ page }) => {
  await signIn(page, demoSignIns.supervisor);
  await page.goto("/model-health");
  await expect(page.getByRole("heading", { level: 1, name: "Model health" })).toBeVisible();
  const compare = page.getByRole("table", { name: "Model versions side by side" });
  await expect(compare).toBeVisible();
  await expect(compare.getByRole("columnheader")).toHaveCount(3);
  await expect(page.getByText("Measured on reviewed alerts only.").first()).toBeVisible();
  await expect(page.getByRole("img", { name: /^Calibration curve of / }).first()).toBeVisible();
  await expect(page.getByRole("img", { name: /^Score drift of / }).first()).toBeVisible();

  // Only a champion: one column of numbers, and the URL says so.
  const form = page.getByRole("form", { name: "Window and model versions" });
  await form.getByLabel("Challenger").selectOption("");
  await form.getByLabel("Window").selectOption("week");
  await form.getByRole("button", { name: "Show" }).click();
  await expect(page).toHaveURL(/challenger=&/);
  await expect(page).toHaveURL(/window=week/);
  await expect(page.getByRole("table", { name: "Model versions side by side" }).getByRole("columnheader")).toHaveCount(2);
  await page.reload();
  await expect(page.getByRole("table", { name: "Model versions side by side" }).getByRole("columnheader")).toHaveCount(2);
});

test("a supervisor reads reviewer quality with the team row and intervals; a wrong day is named, not ignored", async ({ page }) => {
  await signIn(page, demoSignIns.supervisor);
  await page.goto("/reviewer-quality");
  const table = page.getByRole("table", { name: /^Reviewers over the window/ });
  await expect(table).toBeVisible();
  await expect(table.getByRole("rowheader", { name: "Team" })).toBeVisible();
  await expect(page.getByRole("img", { name: /^Hit rate by reviewer/ })).toBeVisible();

  await page.goto("/reviewer-quality?window=day&date=2026-02-30");
  await expect(page.getByRole("main").getByRole("alert")).toContainText("date: not a real calendar date");
  await expect(page.getByLabel("Day (one day or week)")).toHaveValue("2026-02-30");
});

test("an analyst sees model health but not reviewer quality", async ({ page }) => {
  await signIn(page, demoSignIns.analyst);
  await page.goto("/model-health");
  await expect(page.getByRole("heading", { level: 1, name: "Model health" })).toBeVisible();
  await page.goto("/reviewer-quality");
  await expect(page.getByRole("heading", { level: 1, name: "Not allowed" })).toBeVisible();
});
