// Admin journeys: people and API clients, against the demo build.
import { expect, test } from "@playwright/test";
import { demoSignIns } from "@/demo-data/people";
import { signIn } from "@/e2e/support/sign-in";

test("an admin adds a person, who signs in and changes their own password", async ({ page }) => {
  test.slow(); // four password hashes (scrypt, deliberately slow) in one journey
  const stamp = Date.now();
  const email = `new.reviewer.${stamp}@larkmoor.example`;
  const name = `Nell Reviewer ${stamp}`;
  await signIn(page, demoSignIns.admin);
  await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Users" }).click();
  const form = page.getByRole("form", { name: "Add a person" });
  await form.getByLabel("Email").fill(email);
  await form.getByLabel("Name").fill(name);
  await form.getByLabel("Role").selectOption("auditor");
  await form.getByLabel("Initial password").fill("first-password-123");
  await form.getByRole("button", { name: "Add person" }).click();
  await expect(page.getByRole("status").filter({ hasText: `Created ${name} (${email}) as auditor.` })).toBeVisible();
  await expect(page.getByRole("table", { name: "People who can sign in" }).getByRole("row", { name: new RegExp(name) })).toBeVisible();
  await page.getByRole("button", { name: "Sign out" }).click();
  // Wait for the sign-out to land: going to /sign-in while it is still under way found the admin
  // still signed in (and sent to the queue) in one CI run.
  await expect(page).toHaveURL(/\/sign-in$/);

  await signIn(page, email, "first-password-123");
  await page.getByRole("link", { name: /Your account/ }).click();
  await page.getByLabel("Current password").fill("first-password-123");
  await page.getByLabel("New password", { exact: true }).fill("second-password-456");
  await page.getByLabel("New password again").fill("second-password-456");
  await page.getByRole("button", { name: "Change password" }).click();
  await expect(page.getByRole("status").filter({ hasText: "Password changed." })).toBeVisible();
});

test("an admin creates an API client, sees its token once, and revokes it", async ({ page, request }) => {
  const name = `scoring-${Date.now()}`;
  await signIn(page, demoSignIns.admin);
  await page.goto("/admin/api-clients");
  await page.getByLabel("Name").fill(name);
  await page.getByRole("checkbox", { name: /alerts:write/ }).check();
  await page.getByRole("checkbox", { name: /metrics:read/ }).check();
  await page.getByRole("button", { name: "Create API client" }).click();
  const token = page.getByLabel("New API token");
  await expect(token).toHaveValue(/^tdk_[A-Za-z0-9_-]{43}$/);
  const value = await token.inputValue();

  const allowed = await request.get("/api/v1/whoami", { headers: { authorization: `Bearer ${value}` } });
  expect(allowed.status()).toBe(200);
  expect(await allowed.json()).toMatchObject({ kind: "api_client", name, scopes: ["alerts:write", "metrics:read"] });

  // Shown once: after a reload only its first characters remain.
  await page.reload();
  await expect(page.getByLabel("New API token")).toHaveCount(0);
  const row = page.getByRole("table", { name: "API clients" }).getByRole("row", { name: new RegExp(name) });
  await expect(row).toContainText(value.slice(0, 10));
  page.once("dialog", (dialog) => dialog.accept());
  await row.getByRole("button", { name: `Revoke ${name}` }).click();
  await expect(page.getByRole("status").filter({ hasText: `Revoked "${name}"` })).toBeVisible();

  const refused = await request.get("/api/v1/whoami", { headers: { authorization: `Bearer ${value}` } });
  expect(refused.status()).toBe(401);
  expect((await refused.json()).error.message).toBe("The API token was revoked.");
});
