import type { Page } from "@playwright/test";
import { DEMO, expect, queryTestDatabase, signIn, test } from "./fixtures";

// A customer manages their own bookings: they add two yards and book each on a day some weeks
// out (well before the change cut-off), move the first to another day on its change page and
// cancel the second with a reason. The dispatcher is e-mailed each change: the worker delivers
// the messages to the SMTP sink (maildev), where this test reads them.

const SINK = process.env.MAILDEV_API_URL ?? "http://127.0.0.1:11080";

type SinkEmail = { id: string; subject: string; text?: string; to: { address: string }[] };

async function sinkEmailsTo(address: string): Promise<SinkEmail[]> {
  const all = (await (await fetch(`${SINK}/api/email`)).json()) as SinkEmail[];
  return all.filter((e) => e.to.some((t) => t.address.toLowerCase() === address.toLowerCase()));
}

async function shot(page: Page, name: string) {
  await page.evaluate(() => window.scrollTo(0, 0));
  await page.screenshot({ path: `test-results/screenshots/${name}.png`, fullPage: true });
}

function addDays(isoDate: string, days: number): string {
  const date = new Date(`${isoDate}T00:00:00Z`);
  date.setUTCDate(date.getUTCDate() + days);
  return date.toISOString().slice(0, 10);
}

/** Adds a broodless yard of two colonies in the portal, typing its location; returns its id. */
async function addYard(page: Page, name: string, lat: string, lng: string): Promise<number> {
  await page.goto("/portal/yards/new");
  await page.getByLabel("Yard name").fill(name);
  await page.getByLabel("Latitude").fill(lat);
  await page.getByLabel("Longitude").fill(lng);
  await page.getByLabel("Colonies (hives) to treat").fill("2");
  await page.getByLabel("Brood boxes per colony").fill("1");
  await page.getByLabel("Broodless").check();
  await page.getByLabel("Honey supers are off").check();
  await page.getByRole("button", { name: "Save the yard" }).click();
  await expect(page).toHaveURL(/\/portal\/yards\/\d+\/edit\?created=1$/);
  return Number(new URL(page.url()).pathname.split("/")[3]);
}

/** Books one yard on a given day from the booking page. */
async function book(page: Page, yardId: number, yardName: string, day: string) {
  await page.goto(`/portal/book?yard=${yardId}`);
  await expect(page.getByLabel(new RegExp(yardName))).toBeChecked();
  await page.getByLabel("Chosen day").fill(day);
  await page.getByRole("button", { name: /^Book / }).click();
  await expect(page).toHaveURL(new RegExp(`/portal/bookings\\?booked=${day}$`));
}

test("a customer moves one visit to another day and cancels another; the dispatcher is e-mailed both changes", async ({ page }) => {
  test.setTimeout(180_000);
  const tag = Date.now() % 100000;
  const movedYard = `Orchard rise ${tag}`;
  const cancelledYard = `Willow bend ${tag}`;

  await signIn(page, DEMO.customer);
  await expect(page).toHaveURL(/\/portal$/);
  const movedYardId = await addYard(page, movedYard, "42.4712", "-76.4415");
  const cancelledYardId = await addYard(page, cancelledYard, "42.5208", "-76.4523");

  // Three open days with room, four weeks out or more: far past the cut-off (48 hours by default).
  const [{ today }] = await queryTestDatabase<{ today: string }>("select to_char((now() at time zone 'America/New_York')::date, 'YYYY-MM-DD') as today");
  const from = addDays(today, 28);
  const response = await page.request.get(`/api/capacity?from=${from}&to=${addDays(from, 40)}`);
  expect(response.ok()).toBe(true);
  const { days } = (await response.json()) as { days: { date: string; remaining: number; closed: boolean; capacity: number }[] };
  const open = days.filter((d) => !d.closed && d.capacity > 0 && d.remaining >= 4).map((d) => d.date);
  expect(open.length, "open days with room in the demo's calendar").toBeGreaterThanOrEqual(3);
  const [firstDay, secondDay, moveTo] = open;

  await book(page, movedYardId, movedYard, firstDay);
  await book(page, cancelledYardId, cancelledYard, secondDay);

  // Move the first: its row links to the change page, which shows the visit and the calendar.
  await page.goto("/portal/bookings");
  await page.getByRole("row", { name: new RegExp(movedYard) }).getByRole("link", { name: /^Change or cancel/ }).click();
  await expect(page).toHaveURL(/\/portal\/bookings\/\d+\/change$/);
  const movedVisitId = Number(new URL(page.url()).pathname.split("/")[3]);
  await expect(page.getByRole("heading", { name: `Change or cancel: ${movedYard}` })).toBeVisible();
  await expect(page.getByRole("heading", { name: "Safety with oxalic acid vapor" })).toBeVisible();
  // The calendar offers only days from the first one still open to changes: today is not one of them.
  await expect(page.locator(".booking-calendar .vr-day-button").first()).toBeVisible();
  const todayButton = page.locator(".booking-calendar .fc-day-today .vr-day-button");
  if ((await todayButton.count()) > 0) await expect(todayButton).toBeDisabled(); // shown when this month is on screen
  await expect(page.getByText(/From .* on a day with room for 2 colonies\./)).toBeVisible();
  await shot(page, "booking-change-1280");
  await page.setViewportSize({ width: 390, height: 844 });
  await shot(page, "booking-change-390");
  await page.setViewportSize({ width: 1280, height: 800 });
  await page.getByLabel("New day").fill(moveTo);
  await page.getByRole("button", { name: /^Move the visit/ }).click();
  await expect(page).toHaveURL(new RegExp(`/portal/bookings\\?moved=${moveTo}$`));
  await expect(page.getByText(/Visit moved to .*our dispatcher has been told/)).toBeVisible();
  const [moved] = await queryTestDatabase<{ service_date: string }>("select to_char(service_date, 'YYYY-MM-DD') as service_date from visits where id = $1", [movedVisitId]);
  expect(moved.service_date).toBe(moveTo);

  // Cancel the second, with a reason.
  await page.getByRole("row", { name: new RegExp(cancelledYard) }).getByRole("link", { name: /^Change or cancel/ }).click();
  await expect(page.getByRole("heading", { name: `Change or cancel: ${cancelledYard}` })).toBeVisible();
  await page.getByLabel("Reason (optional)").fill("The hives went to a neighbour.");
  await page.getByRole("button", { name: "Cancel the visit" }).click();
  await expect(page).toHaveURL(new RegExp(`/portal/bookings\\?cancelled=${secondDay}$`));
  const cancelledRow = page.getByRole("row", { name: new RegExp(cancelledYard) });
  await expect(cancelledRow).toContainText("Cancelled");
  await expect(cancelledRow.getByRole("link", { name: /^Change or cancel/ })).toHaveCount(0);
  await shot(page, "bookings-after-change-1280");

  // The worker delivers the dispatcher's e-mails to the SMTP sink.
  await expect
    .poll(
      async () => {
        const subjects = (await sinkEmailsTo(DEMO.dispatcher)).map((e) => e.subject);
        return [subjects.some((s) => s.includes(`moved a visit: ${movedYard}`)), subjects.some((s) => s.includes(`cancelled a visit: ${cancelledYard}`))];
      },
      { timeout: 60_000, message: "the dispatcher's e-mails about both changes reach the SMTP sink" },
    )
    .toEqual([true, true]);
  const cancelMail = (await sinkEmailsTo(DEMO.dispatcher)).find((e) => e.subject.includes(`cancelled a visit: ${cancelledYard}`))!;
  expect(cancelMail.text ?? "").toContain("The hives went to a neighbour.");
});
