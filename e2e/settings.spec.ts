// Settings journeys: a supervisor changes how the queue is ordered, an auditor can only read, and
// a refit of a model version's calibration is one button.
import { expect, test } from "@playwright/test";
import { demoSignIns } from "@/demo-data/people";
import { signIn } from "@/e2e/support/sign-in";

test("a supervisor switches the queue to Smith's rule, after a refused value is named beside its field", async ({ page }) => {
  await signIn(page, demoSignIns.supervisor);
  await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Settings" }).click();
  const form = page.getByRole("form", { name: "Queue" });
  const held = form.getByLabel("Alerts one analyst may hold");
  const before = await held.inputValue();

  await held.fill("2.5");
  await form.getByRole("button", { name: "Save queue settings" }).click();
  await expect(form.getByRole("alert")).toHaveText("Some fields need another look; nothing was saved.");
  await expect(form.getByText("Enter a whole number.")).toBeVisible();
  await expect(held).toHaveValue("2.5");

  await held.fill(before);
  await form.getByLabel("Order after overdue alerts").selectOption("loss_per_minute");
  await form.getByLabel("Handling time, card not present").fill("9");
  await form.getByRole("button", { name: "Save queue settings" }).click();
  await expect(form.getByRole("status")).toContainText(/Saved\. \d+ waiting alerts? re-derived/);
  await expect(form.getByLabel("Order after overdue alerts")).toHaveValue("loss_per_minute");

  // Back to the demo's settings for the other journeys.
  await form.getByLabel("Order after overdue alerts").selectOption("expected_loss");
  await form.getByLabel("Handling time, card not present").fill("");
  await form.getByRole("button", { name: "Save queue settings" }).click();
  await expect(form.getByLabel("Order after overdue alerts")).toHaveValue("expected_loss");
});

test("an auditor reads the settings but cannot change them", async ({ page }) => {
  await signIn(page, demoSignIns.auditor);
  await page.goto("/settings");
  const form = page.getByRole("form", { name: "Queue" });
  await expect(form.getByText("Supervisors and admins change these; your role can read them.")).toBeVisible();
  await expect(form.getByLabel("Claim lease")).toBeDisabled();
  await expect(page.getByRole("button", { name: /^Save / })).toHaveCount(0);
  await expect(page.getByRole("button", { name: /Refit calibration/ })).toHaveCount(0);
});

test("an admin refits a model version's calibration from its outcomes", async ({ page }) => {
  await signIn(page, demoSignIns.admin);
  await page.goto("/settings");
  const versions = page.getByRole("table", { name: "Model versions and their calibration" });
  await versions.getByRole("button", { name: "Refit calibration of card-risk-gbm 5.1.0" }).click();
  await expect(versions.getByRole("status")).toContainText(/Refitted on \d+ outcomes .* Brier score 0\.\d{4}; \d+ waiting alerts? re-derived\./);
});
