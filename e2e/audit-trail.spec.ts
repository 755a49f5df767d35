// The Audit trail's chain check against the demo build: the whole chain is recomputed on request, a
// view in between recomputes only what was written since and says so, and asks nothing of the reader.
import { expect, test } from "@playwright/test";
import { demoSignIns } from "@/demo-data/people";
import { signIn } from "@/e2e/support/sign-in";

test("an auditor sees the chain verified, walked in full on request and walked on from there between", async ({ page }) => {
  await signIn(page, demoSignIns.auditor);
  await page.goto("/audit?verify=full");
  const chain = page.getByRole("status").filter({ hasText: "Chain verified" });
  await expect(chain).toContainText("each hash recomputed from the first event on");

  // The view above was itself recorded: the next view walks on from the full walk and says so.
  await page.goto("/audit?action=audit.viewed");
  await expect(chain).toContainText("just now");
  await expect(chain).toContainText(/recomputed from the first event on at \d{4}-\d{2}-\d{2} \d{2}:\d{2} UTC/);
  await chain.getByRole("link", { name: "Recompute every event now" }).click();
  await expect(page).toHaveURL(/action=audit.viewed.*verify=full|verify=full.*action=audit.viewed/);
  await expect(chain).toContainText("each hash recomputed from the first event on");
});
