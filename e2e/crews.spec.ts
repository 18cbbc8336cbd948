import { DEMO, expect, queryTestDatabase, signIn, test } from "./fixtures";

// The dispatcher's crews and working days: add a crew with a daily limit and weekdays, edit
// it, see it in the table; then close a day that has visits from the calendar and see them
// moved to the next days with room.

test("the dispatcher adds a crew with a colony limit and weekdays, and edits it", async ({ page }) => {
  const name = `Crew Test ${Date.now() % 100000}`;
  await signIn(page, DEMO.dispatcher);
  await page.goto("/dispatch");
  await page.getByRole("link", { name: "Crews", exact: true }).first().click();
  await expect(page).toHaveURL(/\/dispatch\/crews$/);
  await expect(page.getByRole("heading", { level: 1, name: "Crews" })).toBeVisible();
  // The estimate's basis: the settings' typical yard, at the loads most colonies on the books take.
  await expect(page.getByTestId("estimate-basis")).toHaveText(/^A typical yard here: \d+ colonies, each dosed in \d+ vaporizer loads? \(as most colonies on your books are\), with \d+ min of driving to the next\.$/);
  await page.getByRole("link", { name: "Add a crew" }).click();
  await expect(page).toHaveURL(/\/dispatch\/crews\/new$/);

  await page.getByLabel("Crew name").fill(name);
  await page.getByLabel("Start point name").fill("Test shop, 3 Orchard Rd, Ithaca");
  await page.getByLabel("Start latitude").fill("42.44");
  await page.getByLabel("Start longitude").fill("-76.5");
  await page.getByLabel("Saturday").check();
  await expect(page.getByLabel("Monday")).toBeChecked(); // a new crew starts Mon–Fri
  await expect(page.getByLabel("Sunday")).not.toBeChecked();
  // A limit of 0 is refused at its field.
  const limit = page.getByLabel("Most colonies a day");
  await limit.fill("0");
  await page.getByRole("button", { name: "Add the crew" }).click();
  await expect(limit).toHaveAttribute("aria-invalid", "true");
  await expect(page.getByText("The most colonies a day must be at least 1; leave it empty for no limit.")).toBeVisible();
  await limit.fill("30");
  await page.getByRole("button", { name: "Add the crew" }).click();
  await expect(page).toHaveURL(/\/dispatch\/crews\?added=\d+$/);
  await expect(page.getByText("Crew added.")).toBeVisible();
  const row = page.getByRole("row", { name: new RegExp(name) });
  await expect(row).toContainText("Active");
  await expect(row).toContainText("Mon–Sat");
  await expect(row).toContainText("30");
  await page.screenshot({ path: "test-results/screenshots/dispatch-crews-1280.png", fullPage: true });

  // Edit: a lower limit, and inactive (so the demo's days keep their two crews).
  await row.getByRole("link", { name: `Edit ${name}` }).click();
  await expect(page.getByRole("heading", { level: 1, name: `Edit ${name}` })).toBeVisible();
  await expect(page.getByLabel("Saturday")).toBeChecked();
  await page.getByLabel("Most colonies a day").fill("25");
  await page.getByRole("checkbox", { name: /^Active/ }).uncheck();
  await page.getByRole("button", { name: "Save changes" }).click();
  await expect(page).toHaveURL(/\/dispatch\/crews\?saved=\d+$/);
  await expect(page.getByText("Crew saved.")).toBeVisible();
  const edited = page.getByRole("row", { name: new RegExp(name) });
  await expect(edited).toContainText("Inactive");
  await expect(edited).toContainText("25");

  const [saved] = await queryTestDatabase<{ max_colonies_per_day: number; working_weekdays: number[]; active: boolean; audits: number }>(
    `select c.max_colonies_per_day, c.working_weekdays, c.active,
            (select count(*)::int from audit_log a where a.entity_type = 'crew' and a.entity_id = c.id::text) as audits
       from crews c where c.name = $1`,
    [name],
  );
  expect(saved).toEqual({ max_colonies_per_day: 25, working_weekdays: [1, 2, 3, 4, 5, 6], active: false, audits: 2 });
});

test("the dispatcher closes a day that has visits from the calendar and sees them moved", async ({ page }) => {
  test.setTimeout(120_000);
  // A day ahead with a few scheduled visits and no run at all (the busiest days are left to
  // the day-planning journey).
  const [day] = await queryTestDatabase<{ service_date: string; visits: number }>(
    `select to_char(v.service_date, 'YYYY-MM-DD') as service_date, count(*)::int as visits from visits v
      where v.status in ('scheduled', 'deferred') and v.service_date > (now() at time zone 'America/New_York')::date + 1
        and not exists (select 1 from runs r where r.service_date = v.service_date)
        and not exists (select 1 from visits w where w.service_date = v.service_date and w.status in ('in_progress', 'done'))
      group by v.service_date having count(*) between 1 and 4 order by count(*), v.service_date limit 1`,
  );
  expect(day, "a day ahead with a few visits and no run").toBeTruthy();
  const yards = await queryTestDatabase<{ id: number; yard: string }>(
    "select v.id, y.name as yard from visits v join yards y on y.id = v.yard_id where v.service_date = $1 and v.status in ('scheduled', 'deferred') order by v.id",
    [day.service_date],
  );

  await signIn(page, DEMO.dispatcher);
  await page.goto(`/dispatch/calendar?date=${day.service_date}`);
  const panel = page.locator("section[aria-labelledby='working-day-heading']");
  await expect(panel).toBeVisible();
  await expect(panel.getByText(new RegExp(`^${day.visits} \\(`))).toBeVisible();

  // A closure needs a note.
  await panel.getByRole("button", { name: "Close the day" }).click();
  await expect(page.getByText(/Say why the day is closed/)).toBeVisible();
  await panel.getByLabel("Why the day is closed").fill("Rain all day");
  await panel.getByRole("button", { name: "Close the day" }).click();
  const done = page.getByRole("status").filter({ hasText: /^Closed / });
  await expect(done).toContainText(`${day.visits} ${day.visits === 1 ? "visit" : "visits"} moved to the next days with room`);
  const movedList = page.getByRole("list", { name: "Visits moved" });
  for (const y of yards) await expect(movedList).toContainText(y.yard);
  await expect(page.getByText(/^Closed: Rain all day$/)).toBeVisible();
  await page.screenshot({ path: "test-results/screenshots/dispatch-calendar-closed-day-1280.png", fullPage: true });

  // Every visit is on a later day now, each customer e-mailed, the closure audited.
  const moved = await queryTestDatabase<{ id: number; service_date: string; emails: number }>(
    `select v.id, to_char(v.service_date, 'YYYY-MM-DD') as service_date,
            (select count(*)::int from email_log e where e.visit_id = v.id and e.kind = 'visit_rescheduled') as emails
       from visits v where v.id = any($1::bigint[]) order by v.id`,
    [yards.map((y) => y.id)],
  );
  for (const v of moved) {
    expect(v.service_date > day.service_date).toBe(true);
    expect(v.emails).toBe(1);
  }
  const [audit] = await queryTestDatabase<{ n: number }>("select count(*)::int as n from audit_log where action = 'service_day.close' and entity_id = $1", [day.service_date]);
  expect(audit.n).toBe(1);

  // The calendar shows a moved visit on its new day.
  await page.goto(`/dispatch/calendar?date=${moved[0].service_date}`);
  await expect(page.locator(".fc-event", { hasText: yards[0].yard }).first()).toBeVisible();

  // Reopen the day: it takes bookings again (the moved visits stay where they went).
  await page.goto(`/dispatch/calendar?date=${day.service_date}`);
  await page.getByRole("button", { name: "Reopen the day" }).click();
  await expect(page.getByRole("status").filter({ hasText: /^Reopened / })).toBeVisible();
  await expect(page.getByRole("button", { name: "Close the day" })).toBeVisible();
});
