import { DEMO, DEMO_PASSWORD, expect, queryTestDatabase, signIn, signOut, test } from "./fixtures";

// What the trade asks of the records and the plans: box types on a customer's yard, and a
// deleted customer's treatment records kept for the business's retention period.

test("a customer puts a yard of medium boxes on the map (0 brood boxes refused) and its plan doses it at the medium rate", async ({ page }) => {
  const tag = Date.now() % 100000;
  await signIn(page, DEMO.customer);
  await page.goto("/portal/yards/new");
  await page.getByLabel("Yard name").fill(`Medium row ${tag}`);
  await page.getByLabel("Latitude").fill("42.4712");
  await page.getByLabel("Longitude").fill("-76.4415");
  await page.getByLabel("Colonies (hives) to treat").fill("3");
  // A living colony has at least one brood box: 0 is refused at its field, nothing saved.
  await page.getByLabel("Brood boxes per colony").fill("0");
  await page.getByRole("radio", { name: /^Medium/ }).check();
  await page.getByLabel("Broodless").check();
  await page.getByLabel("Honey supers are off").check();
  await page.getByRole("button", { name: "Save the yard" }).click();
  await expect(page.getByLabel("Brood boxes per colony")).toHaveAttribute("aria-invalid", "true");
  await expect(page.getByText("A living colony has at least one brood box.")).toBeVisible();
  expect(await queryTestDatabase("select id from yards where name = $1", [`Medium row ${tag}`])).toEqual([]);
  await page.getByLabel("Brood boxes per colony").fill("2");
  await page.getByRole("radio", { name: /^Medium/ }).check();
  await page.getByRole("button", { name: "Save the yard" }).click();
  await expect(page).toHaveURL(/\/portal\/yards\/\d+\/edit\?created=1$/);
  const yardId = Number(new URL(page.url()).pathname.split("/")[3]);
  const [settings] = await queryTestDatabase<{ rate: string }>("select coalesce(value->>'doseGramsPerMediumBox', '0.7') as rate from settings where key = 'business'");
  const rate = Number(settings?.rate ?? 0.7);
  const [colonies] = await queryTestDatabase<{ types: string }>("select string_agg(distinct box_type, ',') as types from colonies where yard_id = $1", [yardId]);
  expect(colonies.types).toBe("medium");

  await page.goto(`/portal/yards/${yardId}`);
  const perColony = Math.round(2 * rate * 100) / 100;
  await expect(page.getByText(new RegExp(`2 medium brood boxes × ${rate} g`))).toBeVisible();
  await expect(page.getByTestId("dose-per-colony")).toContainText(`${perColony} g`);
  await page.screenshot({ path: "test-results/screenshots/yard-medium-plan-1280.png", fullPage: true });

  // Three deep boxes a colony: a dose above one vaporizer load takes several, and the time at
  // the yard grows with them.
  const [figures] = await queryTestDatabase<{ deep: string; load: string }>(
    "select coalesce(value->>'doseGramsPerBroodBox', '1') as deep, coalesce(value->>'vaporizerLoadGrams', '2') as load from settings where key = 'business'",
  );
  const loads = Math.ceil((3 * Number(figures.deep)) / Number(figures.load));
  expect(loads, "three deep boxes take more than one load at the demo's settings").toBeGreaterThan(1);
  const minutes = async () => {
    const text = (await page.getByTestId("service-time").textContent()) ?? "";
    const match = /^(?:(\d+) h)?\s*(?:(\d+) min)?$/.exec(text.trim());
    expect(match, `a duration, got ${text}`).toBeTruthy();
    return Number(match![1] ?? 0) * 60 + Number(match![2] ?? 0);
  };
  const before = await minutes();
  await page.goto(`/portal/yards/${yardId}/edit`);
  await page.getByRole("radio", { name: /^Deep/ }).check();
  await page.getByLabel("Brood boxes per colony").fill("3");
  await page.getByRole("button", { name: "Save changes" }).click();
  await expect(page).toHaveURL(new RegExp(`/portal/yards/${yardId}\\?saved=1$`));
  // The rate is shown in grams, with ounces after it in US units.
  await expect(page.getByTestId("dose-working")).toContainText(new RegExp(`3 deep brood boxes × ${Number(figures.deep)} g( \\([\\d.]+ oz\\))?, in ${loads} vaporizer loads`));
  expect(await minutes()).toBeGreaterThan(before);
});

test("a customer with treated colonies deletes their account: the records keep their name until the retention date, the rest goes at once", async ({ page, browser }) => {
  // A demo customer other than the shared demo sign-in, with a treated visit, given the demo password.
  const [customer] = await queryTestDatabase<{ id: number; name: string; email: string; last: string }>(
    `select c.id, c.name, u.email, to_char(max(v.service_date), 'YYYY-MM-DD') as last
       from customers c join users u on u.id = c.user_id join yards y on y.customer_id = c.id join visits v on v.yard_id = y.id
      where v.status = 'done' and u.email <> $1 and c.anonymised_at is null and u.disabled_at is null
        and exists (select 1 from tallies t where t.visit_id = v.id and t.outcome = 'treated')
        and not exists (select 1 from visits v2 join yards y2 on y2.id = v2.yard_id where y2.customer_id = c.id and v2.status = 'in_progress')
      group by c.id, c.name, u.email order by c.id desc limit 1`,
    [DEMO.customer],
  );
  expect(customer, "a demo customer with a treated visit").toBeTruthy();
  await queryTestDatabase("update users set password_hash = (select password_hash from users where email = $1) where email = $2", [DEMO.customer, customer.email]);
  const [{ years }] = await queryTestDatabase<{ years: number }>("select coalesce((value->>'recordRetentionYears')::int, 2) as years from settings where key = 'business'");
  const keptUntil = `${Number(customer.last.slice(0, 4)) + years}${customer.last.slice(4)}`;

  await signIn(page, customer.email, DEMO_PASSWORD);
  await page.goto("/portal/account");
  await expect(page.getByText(/stay on the treatment records the law asks us to keep, until/).first()).toBeVisible();
  await page.screenshot({ path: "test-results/screenshots/account-delete-retention-1280.png", fullPage: true });
  await page.getByLabel("Your password").fill(DEMO_PASSWORD);
  await page.getByLabel("Type DELETE to confirm").fill("DELETE");
  await page.getByRole("button", { name: "Delete my account" }).click();
  await expect(page).toHaveURL(new RegExp(`/\\?accountDeleted=1&recordsKeptUntil=${keptUntil}$`));
  await expect(page.getByRole("status")).toContainText("stay on the treatment records the law asks us to keep");

  const [after] = await queryTestDatabase<{ name: string; email: string; kept: string }>(
    "select name, email, to_char(records_kept_until, 'YYYY-MM-DD') as kept from customers where id = $1",
    [customer.id],
  );
  expect(after).toEqual({ name: customer.name, email: "", kept: keptUntil });

  // The office still reads the name on the application records, marked as a deleted account.
  const office = await (await browser.newContext()).newPage();
  await signIn(office, DEMO.office);
  await office.goto(`/office/records?from=${customer.last}&to=${customer.last}&customer=${customer.id}`);
  const row = office.getByRole("row", { name: new RegExp(customer.name) }).first();
  await expect(row).toBeVisible();
  await expect(row).toContainText("(account deleted)");
  await signOut(office);
});
