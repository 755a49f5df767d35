// Signs a demo person in through the sign-in form and waits for the Queue, where everyone lands.
import { expect, type Page } from "@playwright/test";
import { DEMO_PASSWORD } from "@/demo-data/people";

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD): Promise<void> {
  await page.goto("/sign-in");
  await page.getByLabel("Email").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("heading", { level: 1, name: "Queue" })).toBeVisible();
}
