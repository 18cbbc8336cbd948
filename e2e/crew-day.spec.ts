import AxeBuilder from "@axe-core/playwright";
import type { Page } from "@playwright/test";
import { DEMO, DEMO_PASSWORD, expect, queryTestDatabase, signIn, test } from "./fixtures";

const SINK = process.env.MAILDEV_API_URL ?? "http://127.0.0.1:11080";

type Stop = { visit_id: number; yard_name: string; customer_email: string; colonies: number };

/** The stops of the demo crew's run today, in order. */
async function todaysStops(): Promise<Stop[]> {
  return queryTestDatabase<Stop>(
    `select v.id as visit_id, y.name as yard_name, c.email as customer_email,
            (select count(*)::int from colonies col where col.yard_id = y.id and col.active) as colonies
       from runs r join crew_members cm on cm.crew_id = r.crew_id join users u on u.id = cm.user_id
       join stops s on s.run_id = r.id join visits v on v.id = s.visit_id join yards y on y.id = v.yard_id join customers c on c.id = y.customer_id
      where u.email = $1 and r.status in ('published', 'in_progress') and r.service_date = (now() at time zone 'America/New_York')::date
      order by s.position`,
    [DEMO.crew],
  );
}

async function expectAccessible(page: Page, what: string) {
  const results = await new AxeBuilder({ page }).analyze();
  const serious = results.violations.filter((v) => v.impact === "serious" || v.impact === "critical").map((v) => `${v.id}: ${v.help}`);
  expect(serious, what).toEqual([]);
}

test.use({ viewport: { width: 390, height: 844 } });

test("the crew ticks the safety check, tallies every colony of the first stop and finishes; the customer gets the report", async ({ page, browser }) => {
  test.setTimeout(180_000);
  const stops = await todaysStops();
  const stop = stops[0];
  expect(stop.colonies).toBeGreaterThanOrEqual(3);

  await signIn(page, DEMO.crew);
  await expect(page).toHaveURL(/\/crew$/);
  await expect(page.getByRole("heading", { name: "Safety check before the first stop" })).toBeVisible();
  await page.screenshot({ path: "test-results/screenshots/crew-run-390.png", fullPage: true });
  await expectAccessible(page, "run");
  // Stops stay closed until all four are ticked.
  await expect(page.getByRole("button", { name: new RegExp(`Stop 1: ${stop.yard_name}`) })).toBeDisabled();
  for (const item of ["Respirator", "Sealed eye protection", "Acid-resistant gloves", "Vaporizer checked"]) {
    await page.getByLabel(new RegExp(item)).check();
  }
  await page.getByRole("button", { name: "Start the run" }).click();
  await page.getByRole("button", { name: new RegExp(`Stop 1: ${stop.yard_name}`) }).click();
  await expect(page.getByRole("heading", { name: new RegExp(stop.yard_name) })).toBeVisible();
  await expect(page.getByRole("link", { name: "Directions" })).toHaveAttribute("href", /^geo:-?\d+(\.\d+)?,-?\d+(\.\d+)?\?q=/);

  // Treatment is blocked until the supers are confirmed off.
  const colonies = page.getByRole("list", { name: "Colonies to tally" }).locator(":scope > li");
  await expect(colonies).toHaveCount(stop.colonies);
  await expect(colonies.first().getByRole("button", { name: /^Treated/ })).toBeDisabled();
  await expect(page.getByText("Treated is blocked: confirm the supers are off first. A colony with a super on can be skipped now.").first()).toBeVisible();
  // Skipping stays open: a colony with a super on is skipped, not treated.
  await expect(colonies.first().getByRole("button", { name: /^Skipped/ })).toBeEnabled();
  await page.screenshot({ path: "test-results/screenshots/crew-stop-390.png", fullPage: true });
  await expectAccessible(page, "stop");
  await page.getByRole("button", { name: "Supers are off — start treating" }).click();
  await expect(page.getByText("Honey supers are off ✓")).toBeVisible();

  for (let i = 0; i < stop.colonies; i++) {
    const row = colonies.nth(i);
    if (i === 1) {
      await row.getByRole("button", { name: /^Skipped/ }).click();
      await row.getByLabel("Why skipped").selectOption("queenless");
      await expect(row.getByText("Skipped: Queenless")).toBeVisible();
      continue;
    }
    await row.getByRole("button", { name: /^Treated/ }).click();
    await expect(row.getByText("Treated ✓")).toBeVisible();
    if (i === 0 || i === 2) {
      await row.getByRole("button", { name: /Add wash count/ }).click();
      await expect(row.getByLabel("Mites counted")).toBeVisible();
      await row.getByLabel("Mites counted").fill(i === 0 ? "9" : "4");
      await row.getByLabel("Bees sampled").fill("300");
      await row.getByLabel("Mites counted").focus(); // blur the last field so the count is kept
      await expect(row.getByText(i === 0 ? /^3\.0 mites per 100 bees/ : /^1\.3 mites per 100 bees/)).toBeVisible();
    }
  }
  await page.screenshot({ path: "test-results/screenshots/crew-tally-390.png", fullPage: true });
  await expectAccessible(page, "tally");
  await page.getByLabel(/Weather/).fill("Cold, calm");
  await page.getByRole("button", { name: "Finish visit" }).click();
  await expect(page.getByRole("heading", { name: "Visit finished" })).toBeVisible();
  await expect(page.getByTestId("sync-status")).toHaveText(/All work sent/, { timeout: 30_000 });
  await expect(page.getByText(/The office could not take/)).toHaveCount(0);
  // A finished stop's tallies can no longer be changed on the phone.
  await expect(colonies.first().getByRole("button", { name: /^Skipped/ })).toBeDisabled();
  await expect(colonies.first().getByRole("button", { name: /^Correct boxes/ })).toBeDisabled();

  // On the server: one tally per colony, the visit done.
  const [server] = await queryTestDatabase<{ tallies: number; skipped: number; washed: number; status: string }>(
    `select (select count(*)::int from tallies where visit_id = $1) as tallies,
            (select count(*)::int from tallies where visit_id = $1 and outcome = 'skipped') as skipped,
            (select count(*)::int from tallies where visit_id = $1 and mites is not null) as washed,
            (select status from visits where id = $1) as status`,
    [stop.visit_id],
  );
  expect(server).toEqual({ tallies: stop.colonies, skipped: 1, washed: 2, status: "done" });

  // The customer sees the report in the portal, and the e-mail reaches the sink.
  const customer = await (await browser.newContext()).newPage();
  await signIn(customer, stop.customer_email, DEMO_PASSWORD);
  await customer.goto(`/portal/visits/${stop.visit_id}`);
  await expect(customer.getByRole("heading", { name: `Visit report: ${stop.yard_name}` })).toBeVisible();
  await expect(customer.getByRole("cell", { name: /Skipped: Queenless/ })).toBeVisible();
  await expect(customer.getByText("9 mites in 300 bees = 3.0 per 100")).toBeVisible();
  await expect
    .poll(
      async () => {
        const emails = (await (await fetch(`${SINK}/api/email`)).json()) as { subject: string; to: { address: string }[] }[];
        return emails.some((e) => e.to.some((t) => t.address === stop.customer_email) && /report/i.test(e.subject) && e.subject.includes(stop.yard_name));
      },
      { timeout: 45_000 },
    )
    .toBe(true);
});
