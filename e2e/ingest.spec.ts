// Ingest log journeys against the demo build: a supervisor uploads a large CSV of alerts and sees
// progress, running totals and the rows that were refused; an auditor reads the log but cannot upload.
import { expect, test } from "@playwright/test";
import { demoSignIns } from "@/demo-data/people";
import { signIn } from "@/e2e/support/sign-in";

/** 4,500 alerts of the demo's champion model; two of them are refused (a card number, a bad currency). */
function alertsCsv(stamp: number): string {
  const header = "externalId,occurredAt,amountMinor,currency,channel,merchantCategoryCode,merchantCountry,entityRef,modelName,modelVersion,score,reasonCodes";
  const rows = Array.from({ length: 4_500 }, (_, index) => {
    const entityRef = index === 10 ? "4111 1111 1111 1111" : `tok_up${index}`;
    const currency = index === 3_001 ? "euro" : "EUR";
    return `up-${stamp}-${index},2026-11-30T10:00:00Z,${1_000 + index},${currency},card_not_present,5999,NL,${entityRef},card-risk-gbm,5.1.0,0.8,velocity_1h:0.2`;
  });
  return [header, ...rows].join("\r\n");
}

test("a supervisor uploads a large CSV of alerts and sees progress, totals and the refused rows", async ({ page }) => {
  const stamp = Date.now();
  await signIn(page, demoSignIns.supervisor);
  await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Ingest log" }).click();
  await expect(page.getByRole("heading", { level: 1, name: "Ingest log" })).toBeVisible();

  await page.getByLabel("Rows in the file").selectOption("alerts");
  await page.getByLabel("File to upload").setInputFiles({ name: `night-${stamp}.csv`, mimeType: "text/csv", buffer: Buffer.from(alertsCsv(stamp)) });
  await page.getByRole("button", { name: "Upload", exact: true }).click();

  await expect(page.getByRole("status").filter({ hasText: "Done: 4,498 accepted, 0 duplicate, 0 conflict, 2 rejected in 3 batches." })).toBeVisible();
  await expect(page.getByRole("progressbar")).toHaveAttribute("value", "4500");
  const refused = page.getByRole("table", { name: "Rows not accepted" });
  await expect(refused.getByRole("row", { name: /entityRef .*411111\*\*\*\*\*\*1111/ })).toBeVisible();
  await expect(refused.getByRole("row", { name: /3001 .*currency/ })).toBeVisible();

  const log = page.getByRole("table", { name: "Ingest batches, newest first" });
  await expect(log.getByRole("row", { name: new RegExp(`night-${stamp}\\.csv`) })).toHaveCount(3);
  await expect(log.getByRole("row", { name: new RegExp(`night-${stamp}\\.csv`) }).getByRole("link", { name: /CSV/ })).toHaveCount(2);
});

test("an auditor reads the ingest log but is offered no upload", async ({ page }) => {
  await signIn(page, demoSignIns.auditor);
  await page.goto("/ingest");
  await expect(page.getByRole("table", { name: "Ingest batches, newest first" })).toBeVisible();
  await expect(page.getByRole("button", { name: "Upload", exact: true })).toHaveCount(0);
});
