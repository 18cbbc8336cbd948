import { DEMO, expect, queryTestDatabase, signIn, test } from "./fixtures";

async function aTwoBoxYard() {
  const [yard] = await queryTestDatabase<{ id: number; colony_count: number }>(
    "select id, colony_count from yards where brood_boxes_per_colony = 2 and colony_count > 0 and archived_at is null order by id limit 1",
  );
  return yard;
}

test("the owner changes the dose rate and units, and the yard plan shows the new figures", async ({ page }) => {
  const yard = await aTwoBoxYard();
  await signIn(page, DEMO.owner);
  await page.goto(`/dispatch/yards/${yard.id}`);
  const before = await page.getByTestId("dose-per-colony").textContent();
  expect(before).toMatch(/oz/); // US units by default show ounces beside grams

  await page.goto("/dispatch/settings");
  await page.screenshot({ path: "test-results/screenshots/settings-owner-1280.png", fullPage: true });
  // A dose above the label maximum is refused at its field, and nothing is saved.
  await page.getByLabel("Dose per deep brood box").fill("2");
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.getByText("Nothing was saved. Correct the fields marked below.")).toBeVisible();
  await expect(page.getByLabel("Dose per deep brood box")).toHaveAttribute("aria-invalid", "true");
  await expect(page.getByText(/exceeds the label maximum you entered \(1 g\).*tick “My label allows this dose”/)).toBeVisible();
  await page.reload();
  await expect(page.getByLabel("Dose per deep brood box")).toHaveValue("1");

  // A course with brood whose rounds do not span the capped-brood period is refused at its field.
  await page.getByLabel("Days between rounds").fill("5");
  await page.getByRole("button", { name: "Save settings" }).click();
  // Marked at the field changed and at the one it goes with.
  await expect(page.getByLabel("Days between rounds")).toHaveAttribute("aria-invalid", "true");
  await expect(page.getByLabel("Rounds with brood")).toHaveAttribute("aria-invalid", "true");
  await expect(page.getByText(/3 rounds 5 days apart span 10 days; a course with brood must span at least 12 days/)).toHaveCount(2);
  await page.reload();
  await expect(page.getByLabel("Days between rounds")).toHaveValue("7");

  // Above the label with the owner's confirmation: saved, and the page says so.
  await page.getByLabel("Dose per deep brood box").fill("1.5");
  await page.getByLabel("My label allows this dose").check();
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.getByText("Settings saved.")).toBeVisible();
  await expect(page.getByRole("note").filter({ hasText: "Above the label maximum of 1 g per brood box: deep boxes 1.5 g" })).toContainText("Saved with the owner's confirmation");
  await expect(page.getByLabel("My label allows this dose")).not.toBeChecked();
  const [audit] = await queryTestDatabase<{ rate: string; confirmed: boolean }>(
    "select after->>'doseGramsPerBroodBox' as rate, (after->>'doseAboveLabelConfirmed')::boolean as confirmed from audit_log where action = 'settings.update' order by id desc limit 1",
  );
  expect(audit).toEqual({ rate: "1.5", confirmed: true });

  await page.getByLabel("Label maximum per brood box").fill("4");
  await page.getByLabel("Dose per deep brood box").fill("2");
  await page.getByLabel("Units").selectOption("metric");
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.getByText("Settings saved.")).toBeVisible();

  await page.goto(`/dispatch/yards/${yard.id}`);
  // 2 brood boxes × 2 g per brood box, in metric: grams only.
  await expect(page.getByTestId("dose-per-colony")).toHaveText("4 g");
  await expect(page.getByTestId("dose-per-round")).toHaveText(`${yard.colony_count * 4} g`);
  await page.screenshot({ path: "test-results/screenshots/yard-plan-owner-1280.png", fullPage: true });

  // Put the defaults back for the tests that follow.
  await page.goto("/dispatch/settings");
  await page.getByLabel("Dose per deep brood box").fill("1");
  await page.getByLabel("Label maximum per brood box").fill("1");
  await page.getByLabel("Units").selectOption("us");
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.getByText("Settings saved.")).toBeVisible();
});

test("the dispatcher reads the settings but cannot change them", async ({ page }) => {
  await signIn(page, DEMO.dispatcher);
  await page.goto("/dispatch/settings");
  await expect(page.getByText("Only the owner can change these settings.")).toBeVisible();
  await expect(page.getByLabel("Dose per deep brood box")).toBeDisabled();
  await expect(page.getByRole("button", { name: "Save settings" })).toHaveCount(0);
  const response = await page.request.post("/dispatch/settings", { form: { doseGramsPerBroodBox: "1" }, maxRedirects: 0 });
  expect(response.status()).toBe(403);
});
