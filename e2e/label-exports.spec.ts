// Label exports against the demo build: a supervisor starts an export, watches it finish and
// downloads the file; an auditor sees past exports but is offered no form.
import { readFile } from "node:fs/promises";
import { expect, test } from "@playwright/test";
import { demoSignIns } from "@/demo-data/people";
import { signIn } from "@/e2e/support/sign-in";

test("a supervisor starts a label export, sees it finish and downloads the CSV", async ({ page }) => {
  await signIn(page, demoSignIns.supervisor);
  await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Label exports" }).click();
  await expect(page.getByRole("heading", { level: 1, name: "Label exports" })).toBeVisible();

  await page.getByLabel("Maturity (days)").fill("0");
  await page.getByLabel("Keep inconclusive outcomes (label empty)").check();
  await page.getByRole("button", { name: "Start export" }).click();
  await expect(page.getByRole("status").filter({ hasText: "Started the export (CSV)" })).toBeVisible();

  // The list refreshes itself while the export runs; the newest row gets its download link when done.
  const newest = page.getByRole("table", { name: "Label exports, newest first" }).getByRole("row").nth(1);
  await expect(newest.getByRole("link", { name: "Download" })).toBeVisible({ timeout: 60_000 });
  await expect(newest).toContainText("done");

  const [download] = await Promise.all([page.waitForEvent("download"), newest.getByRole("link", { name: "Download" }).click()]);
  expect(download.suggestedFilename()).toMatch(/^label-export-\d{8}-[0-9a-f-]{36}\.csv$/);
  const text = await readFile((await download.path()) ?? "", "utf8");
  expect(text.split("\r\n")[0]).toBe(
    "alert_id,external_id,model_name,model_version,score,probability,amount_minor,currency,channel,merchant_category_code,merchant_country,occurred_at,closed_at,label,label_source,label_at,label_received_at,overrides_outcome,outcome,second_review,reviewer_id,below_the_line,inclusion_probability,weight",
  );
  // Reviewers appear only as pseudonymous ids.
  expect(text).not.toContain("@larkmoor.example");
});

test("an auditor sees past label exports but is offered no form", async ({ page }) => {
  await signIn(page, demoSignIns.auditor);
  await page.goto("/label-exports");
  await expect(page.getByRole("heading", { level: 1, name: "Label exports" })).toBeVisible();
  await expect(page.getByRole("button", { name: "Start export" })).toHaveCount(0);
});
