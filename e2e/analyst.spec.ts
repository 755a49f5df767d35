// An analyst's shift in a real browser, against the demo build (e2e/support/serve-demo.ts): take
// the next alerts in priority order, close them by keyboard alone, two analysts taking next at the
// same moment, and the four-eyes rule from the first analyst to a second reviewer.
import { mkdirSync } from "node:fs";
import { expect, test, type Browser, type Page } from "@playwright/test";
import { DEMO_PASSWORD, demoSignIns } from "@/demo-data/people";

// Each journey visits several pages as one or two people: three times the harness's per-test time.
test.describe.configure({ timeout: 180_000 });

const ARTIFACTS = "e2e/artifacts";
mkdirSync(ARTIFACTS, { recursive: true });

async function signIn(page: Page, email: string): Promise<void> {
  await page.goto("/sign-in");
  await page.getByLabel("Email").fill(email);
  await page.getByLabel("Password").fill(DEMO_PASSWORD);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("heading", { name: "Waiting alerts in priority order" })).toBeVisible();
}

async function signedInPage(browser: Browser, email: string): Promise<Page> {
  const context = await browser.newContext();
  const page = await context.newPage();
  await signIn(page, email);
  return page;
}

interface QueueEntry {
  id: string;
  externalId: string;
  exposureMinor: number | null;
}

/** The queue as the API gives it: the order "take next" hands alerts out. */
async function queueFromApi(page: Page, limit: number): Promise<QueueEntry[]> {
  const response = await page.request.get(`/api/v1/queue?limit=${limit}`);
  expect(response.ok()).toBe(true);
  const body = (await response.json()) as { alerts: QueueEntry[] };
  return body.alerts;
}

/** The external ids in the first rows of the Queue screen's table of waiting alerts. */
async function queueFromScreen(page: Page, rows: number): Promise<string[]> {
  const table = page.getByRole("table", { name: "Waiting alerts in priority order" });
  const links = table.getByRole("row").getByRole("link");
  await expect(links.first()).toBeVisible();
  return (await links.allTextContents()).slice(0, rows).map((text) => text.trim());
}

const alertHeading = (page: Page) => page.getByRole("heading", { level: 1 });

/** Keys act once the page's script runs; the shortcuts button is enabled from then on. */
async function shortcutsReady(page: Page): Promise<void> {
  await expect(page.getByRole("button", { name: /^Keyboard shortcuts/ })).toBeEnabled();
}
const outcomes = (page: Page) => page.getByRole("region", { name: "Outcomes" });

// First: the demo queue has only a few alerts above the four-eyes amount, and the next test's
// "take next" would hand out the largest of them.
test("four-eyes: a large legitimate outcome goes to a second person, who overturns it; both outcomes are kept", async ({ browser }) => {
  const analyst = await signedInPage(browser, demoSignIns.analyst);
  // An alert whose exposure is at or above the four-eyes amount (2,000.00 EUR by default).
  const large = (await queueFromApi(analyst, 500)).find((alert) => (alert.exposureMinor ?? 0) >= 200_000);
  expect(large, "the demo queue has a waiting alert with exposure of at least 2,000.00").toBeDefined();
  await analyst.goto(`/alerts/${large!.id}`);
  await expect(alertHeading(analyst)).toHaveText(large!.externalId);
  await shortcutsReady(analyst);
  await analyst.keyboard.press("c");
  await expect(analyst.getByRole("heading", { name: "Record the outcome" })).toBeVisible();
  await analyst.keyboard.press("l");
  await expect(analyst.getByRole("note").filter({ hasText: "four-eyes amount" })).toBeVisible();
  await analyst.keyboard.press("Control+Enter");
  await expect(analyst.getByText("Waiting for a second review", { exact: true })).toBeVisible();
  await expect(analyst.getByText(/You recorded the first outcome, so someone else must give the second review/)).toBeVisible();
  await expect(analyst.getByRole("heading", { name: "Second review" })).toHaveCount(0);

  const supervisor = await signedInPage(browser, demoSignIns.supervisor);
  const waiting = supervisor.getByRole("region", { name: /Waiting for a second review/ });
  await waiting.getByRole("link", { name: large!.externalId }).click();
  await expect(supervisor.getByRole("heading", { name: "Second review" })).toBeVisible();
  await shortcutsReady(supervisor);
  await expect(supervisor.getByRole("radio", { name: "Confirm: Legitimate" })).toBeVisible();
  await supervisor.keyboard.press("f");
  await expect(supervisor.getByRole("radio", { name: "Overturn: Confirmed fraud" })).toBeChecked();
  await supervisor.getByRole("combobox", { name: "Reason" }).selectOption("Merchant pattern matches fraud");
  await supervisor.keyboard.press("n");
  await supervisor.keyboard.type("Same merchant as three confirmed frauds this week.");
  await supervisor.keyboard.press("Control+Enter");

  await expect(supervisor.getByText("Closed", { exact: true })).toBeVisible();
  const kept = outcomes(supervisor);
  await expect(kept.getByText("First review:")).toBeVisible();
  await expect(kept.getByText("Second review:")).toBeVisible();
  await expect(kept.getByText("Legitimate", { exact: true })).toBeVisible();
  await expect(kept.getByText("Confirmed fraud", { exact: true })).toBeVisible();
  await expect(supervisor.getByRole("region", { name: "Timeline" }).getByText("Second review overturned")).toBeVisible();
  await analyst.context().close();
  await supervisor.context().close();
});

test("an analyst takes the next three alerts in priority order and closes them by keyboard alone", async ({ page }) => {
  await signIn(page, demoSignIns.analyst);
  const onScreen = await queueFromScreen(page, 3);
  const fromApi = await queueFromApi(page, 3);
  expect(onScreen).toEqual(fromApi.map((alert) => alert.externalId));
  await page.screenshot({ path: `${ARTIFACTS}/queue.png`, fullPage: true });

  const plan = [
    { key: "f", label: "Confirmed fraud", note: "Cardholder called back: not their purchase." },
    { key: "i", label: "Inconclusive", note: "No answer on two numbers." },
    { key: "l", label: "Legitimate", note: "Cardholder confirmed by phone." },
  ];
  const taken: string[] = [];
  for (const [index, step] of plan.entries()) {
    // From the queue the first time, from the closed alert's page after that: "t" takes the next one.
    await shortcutsReady(page);
    await page.keyboard.press("t");
    await expect(alertHeading(page)).toHaveText(fromApi[index].externalId);
    await shortcutsReady(page);
    taken.push(page.url().split("/alerts/")[1]);
    if (index === 0) await page.screenshot({ path: `${ARTIFACTS}/alert.png`, fullPage: true });

    await page.keyboard.press(step.key);
    await expect(page.getByRole("radio", { name: new RegExp(step.label) })).toBeChecked();
    await page.keyboard.press("n");
    await expect(page.getByLabel(/^Note/)).toBeFocused();
    await page.keyboard.type(step.note);
    await page.keyboard.press("Control+Enter");

    // The form is gone; the alert shows its outcome, closed or sent to a second person.
    await expect(outcomes(page).getByText("First review:")).toBeVisible();
    await expect(outcomes(page).getByText(step.label, { exact: true })).toBeVisible();
    await expect(outcomes(page).getByText(step.note)).toBeVisible();
    await expect(page.getByRole("heading", { name: "Record the outcome" })).toHaveCount(0);
  }

  // Each alert's own page keeps its outcome and the timeline records it.
  for (const [index, id] of taken.entries()) {
    await page.goto(`/alerts/${id}`);
    await expect(outcomes(page).getByText(plan[index].label, { exact: true })).toBeVisible();
    await expect(outcomes(page).getByText(/Ines Varga/)).toBeVisible();
    await expect(page.getByRole("region", { name: "Timeline" }).getByText("Outcome recorded")).toBeVisible();
  }
  // Closed alerts are no longer waiting.
  const after = await queueFromApi(page, 10);
  for (const id of taken) expect(after.map((alert) => alert.id)).not.toContain(id);
});

test("two analysts pressing take next at the same moment get different alerts", async ({ browser }) => {
  const first = await signedInPage(browser, demoSignIns.analyst);
  const second = await signedInPage(browser, demoSignIns.secondAnalyst);
  const takeNext = (page: Page) => page.getByRole("button", { name: /^Take next/ });
  await Promise.all([takeNext(first).click(), takeNext(second).click()]);
  await Promise.all([first.waitForURL(/\/alerts\//), second.waitForURL(/\/alerts\//)]);
  const [a, b] = [first.url(), second.url()];
  expect(a).not.toBe(b);
  await expect(alertHeading(first)).not.toHaveText((await alertHeading(second).textContent()) ?? "");

  // Each holds their own; releasing puts both back for the next test.
  for (const page of [first, second]) {
    await expect(page.getByRole("heading", { name: "Record the outcome" })).toBeVisible();
    await shortcutsReady(page);
    await page.keyboard.press("r");
    await expect(page.getByRole("heading", { name: "Waiting alerts in priority order" })).toBeVisible();
  }
  await first.context().close();
  await second.context().close();
});

test("a stale second tab records nothing more, says what was recorded, and keeps the typed note", async ({ page }) => {
  await signIn(page, demoSignIns.secondAnalyst);
  await shortcutsReady(page);
  await page.keyboard.press("t");
  await expect(page.getByRole("heading", { name: "Record the outcome" })).toBeVisible();
  const stale = await page.context().newPage();
  await stale.goto(page.url());
  await expect(stale.getByRole("heading", { name: "Record the outcome" })).toBeVisible();
  await shortcutsReady(stale);
  await shortcutsReady(page);

  await page.keyboard.press("f");
  await page.keyboard.press("Control+Enter");
  await expect(outcomes(page).getByText("Confirmed fraud", { exact: true })).toBeVisible();

  await stale.keyboard.press("i");
  await stale.keyboard.press("n");
  await stale.keyboard.type("Written in the other tab.");
  await stale.keyboard.press("Control+Enter");
  await expect(stale.getByRole("alert").filter({ hasText: "You already recorded “Confirmed fraud”" })).toBeVisible();
  await expect(stale.getByLabel(/^Note/)).toHaveValue("Written in the other tab.");

  await stale.reload();
  await expect(outcomes(stale).getByText("First review:")).toHaveCount(1);
  await expect(outcomes(stale).getByText("Second review:")).toHaveCount(0);
  await stale.close();
});

test("without a connection the form says the outcome was not saved, keeps the note, and saves once back online", async ({ page }) => {
  await signIn(page, demoSignIns.secondAnalyst);
  await shortcutsReady(page);
  await page.keyboard.press("t");
  await expect(page.getByRole("heading", { name: "Record the outcome" })).toBeVisible();
  await shortcutsReady(page);
  await page.keyboard.press("i");
  await page.keyboard.press("n");
  await page.keyboard.type("Typed just before the network dropped.");

  await page.context().setOffline(true);
  await page.keyboard.press("Control+Enter");
  await expect(page.getByRole("alert").filter({ hasText: "The outcome was NOT saved." })).toBeVisible();
  await expect(page.getByLabel(/^Note/)).toHaveValue("Typed just before the network dropped.");
  await expect(page.getByRole("radio", { name: "Inconclusive" })).toBeChecked();

  await page.context().setOffline(false);
  await page.getByRole("button", { name: /^Record outcome/ }).click();
  await expect(outcomes(page).getByText("Typed just before the network dropped.")).toBeVisible();
});

test("an auditor can read an alert but sees no control that changes it", async ({ browser }) => {
  const auditor = await signedInPage(browser, demoSignIns.auditor);
  await expect(auditor.getByRole("button", { name: /^Take next/ })).toHaveCount(0);
  await auditor.getByRole("table", { name: "Waiting alerts in priority order" }).getByRole("link").first().click();
  await expect(auditor.getByRole("region", { name: "Transaction" })).toBeVisible();
  const main = auditor.getByRole("main");
  for (const name of [/take/i, /release/i, /record/i]) await expect(main.getByRole("button", { name })).toHaveCount(0);
  await expect(main.getByRole("radio")).toHaveCount(0);
  await expect(main.getByRole("textbox")).toHaveCount(0);
  await auditor.context().close();
});
