import type { Page } from "@playwright/test";
import { DEMO, expect, signIn, signUpAndConfirm, test } from "./fixtures";

// A 1×1 PNG photo.
const PNG = Buffer.from("89504e470d0a1a0a0000000d49484452000000010000000108060000001f15c4890000000d49444154789c6360000002000100ffff03000006000557bfabd40000000049454e44ae426082", "hex");

async function shot(page: Page, name: string) {
  await page.evaluate(() => window.scrollTo(0, 0));
  await page.screenshot({ path: `test-results/screenshots/${name}.png`, fullPage: true });
}

test("a new customer adds a yard on the map, uploads a photo and books a day; the dispatcher sees it and moves it", async ({ page, browser }) => {
  test.setTimeout(180_000);
  const email = `robin.${Date.now()}@example.test`;
  const yardName = `Clover field ${Date.now() % 100000}`;

  // Sign up, confirming the address by the e-mailed link.
  await signUpAndConfirm(page, { name: "Robin Meadowlark", email, password: "a-long-enough-password" });

  // Add a yard by clicking the map.
  await page.getByRole("link", { name: "Add a yard" }).first().click();
  await expect(page).toHaveURL(/\/portal\/yards\/new$/);
  await page.getByLabel("Yard name").fill(yardName);
  const map = page.locator(".leaflet-container").first();
  await expect(map).toBeVisible();
  await expect(page.locator(".leaflet-overlay-pane path").first()).toBeAttached(); // the offline base map is drawn
  await shot(page, "yard-new-1280");
  const box = (await map.boundingBox())!;
  await map.click({ position: { x: box.width / 2, y: box.height / 2 } });
  await expect(page.getByLabel("Latitude")).not.toHaveValue("");
  await expect(page.getByLabel("Longitude")).not.toHaveValue("");
  const lat = Number(await page.getByLabel("Latitude").inputValue());
  expect(lat).toBeGreaterThan(41);
  expect(lat).toBeLessThan(44);
  await page.getByLabel("Colonies (hives) to treat").fill("4");
  await page.getByLabel("Brood boxes per colony").fill("1");
  await page.getByLabel("Broodless").check();
  await page.getByLabel("Honey supers are off").check();
  await page.getByLabel("Access notes").fill("Farm gate on the left; the hives are behind the barn.");
  await page.getByRole("button", { name: "Save the yard" }).click();
  await expect(page).toHaveURL(/\/portal\/yards\/\d+\/edit\?created=1$/);

  // Upload a photo; a renamed non-image is refused at the field.
  await page.getByLabel("Add a photo").setInputFiles({ name: "notes.jpg", mimeType: "image/jpeg", buffer: Buffer.from("this is text, not a photo") });
  await page.getByRole("button", { name: "Upload photo" }).click();
  await expect(page.getByText("That file is not a photo Varroute can show.")).toBeVisible();
  await page.getByLabel("Add a photo").setInputFiles({ name: "gate.png", mimeType: "image/png", buffer: PNG });
  await page.getByRole("button", { name: "Upload photo" }).click();
  await expect(page.getByRole("img", { name: "Photo gate.png" })).toBeVisible();

  // Book a day from the calendar.
  await page.getByRole("link", { name: "Book this yard" }).click();
  await expect(page.getByLabel(new RegExp(yardName))).toBeChecked();
  const firstOpenDay = page.locator(".vr-day-open .vr-day-button:not([disabled])").first();
  await expect(firstOpenDay).toBeVisible();
  await firstOpenDay.click();
  const chosen = await page.getByLabel("Chosen day").inputValue();
  expect(chosen).toMatch(/^\d{4}-\d{2}-\d{2}$/);
  await page.getByLabel("Morning").check();
  await shot(page, "book-1280");
  await page.setViewportSize({ width: 390, height: 844 });
  await shot(page, "book-390");
  await page.setViewportSize({ width: 1280, height: 800 });
  await page.getByRole("button", { name: /^Book / }).click();
  await expect(page).toHaveURL(new RegExp(`/portal/bookings\\?booked=${chosen}$`));
  await expect(page.getByText(/A confirmation is on its way/)).toBeVisible();
  const row = page.getByRole("row", { name: new RegExp(yardName) });
  await expect(row).toContainText("Confirmed");
  await expect(row).toContainText("Morning");
  await shot(page, "bookings-1280");
  await page.setViewportSize({ width: 390, height: 844 });
  await shot(page, "bookings-390");

  // The dispatcher sees it on the calendar and the map, and moves it.
  const dispatcher = await (await browser.newContext({ viewport: { width: 1280, height: 800 } })).newPage();
  await signIn(dispatcher, DEMO.dispatcher);
  await dispatcher.goto(`/dispatch/calendar?date=${chosen}`);
  const event = dispatcher.locator(".fc-event", { hasText: yardName });
  await expect(event).toBeVisible();
  await shot(dispatcher, "dispatch-calendar-1280");
  await dispatcher.goto("/dispatch/map");
  await expect(dispatcher.getByRole("link", { name: yardName })).toBeVisible();
  await dispatcher.goto(`/dispatch/calendar?date=${chosen}`);
  await dispatcher.locator(".fc-event", { hasText: yardName }).click();
  await expect(dispatcher).toHaveURL(/\/dispatch\/visits\/\d+$/);
  // The next day after the chosen one that has crews working and room for the yard's 4 colonies.
  const after = (days: number) => {
    const d = new Date(`${chosen}T00:00:00Z`);
    d.setUTCDate(d.getUTCDate() + days);
    return d.toISOString().slice(0, 10);
  };
  const room = (await (await dispatcher.request.get(`/api/capacity?from=${after(1)}&to=${after(14)}`)).json()) as { days: { date: string; closed: boolean; remaining: number }[] };
  const moveTo = room.days.find((d) => !d.closed && d.remaining >= 4)!.date;
  await dispatcher.getByLabel("New day").fill(moveTo);
  await dispatcher.getByLabel("Reason for the customer (optional)").fill("Rain is forecast.");
  await dispatcher.getByRole("button", { name: "Move the visit" }).click();
  await expect(dispatcher.getByText("Visit moved; the customer is being e-mailed.")).toBeVisible();
  await dispatcher.setViewportSize({ width: 390, height: 844 });
  await dispatcher.goto(`/dispatch/calendar?date=${moveTo}`);
  await expect(dispatcher.locator(".fc-event", { hasText: yardName })).toBeVisible();
  await shot(dispatcher, "dispatch-calendar-390");

  // The customer's portal shows the new day.
  await page.goto("/portal/bookings");
  await expect(page.getByRole("row", { name: new RegExp(yardName) })).toBeVisible();
  await page.goto("/portal");
  await expect(page.getByRole("row", { name: new RegExp(yardName) }).first()).toBeVisible();
});
