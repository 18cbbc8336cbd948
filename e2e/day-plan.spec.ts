import { DEMO, expect, queryTestDatabase, signIn, test } from "./fixtures";

test("the dispatcher plans a two-crew day, drags a stop to the other crew and publishes; the crew sees the run", async ({ page, browser }) => {
  test.setTimeout(180_000);
  // The seeded day ahead with the most open visits and no run published yet.
  const [day] = await queryTestDatabase<{ service_date: string; visits: number }>(
    `select to_char(v.service_date, 'YYYY-MM-DD') as service_date, count(*)::int as visits from visits v
      where v.status in ('scheduled', 'deferred') and v.service_date > current_date
        and not exists (select 1 from runs r where r.service_date = v.service_date and r.status <> 'draft')
      group by v.service_date order by count(*) desc, v.service_date limit 1`,
  );
  expect(day.visits).toBeGreaterThanOrEqual(6);
  const [crewOne] = await queryTestDatabase<{ id: number; name: string }>(
    "select crews.id, crews.name from crews join crew_members cm on cm.crew_id = crews.id join users u on u.id = cm.user_id where u.email = $1",
    [DEMO.crew],
  );

  await signIn(page, DEMO.dispatcher);
  await page.goto(`/dispatch/days/${day.service_date}`);
  await page.getByRole("button", { name: /Plan the day|Re-plan the day/ }).click();
  await expect(page.getByText(/^Planned \d+ colonies on 2 runs\.$/)).toBeVisible({ timeout: 60_000 });

  const own = page.getByTestId(`crew-${crewOne.id}`);
  const [otherCrew] = await queryTestDatabase<{ id: number }>("select id from crews where active and id <> $1 order by id limit 1", [crewOne.id]);
  const other = page.getByTestId(`crew-${otherCrew.id}`);
  await expect(own.locator("[data-visit-id]").first()).toBeVisible();
  const before = await own.locator("[data-visit-id]").count();
  const moved = other.locator("[data-visit-id]").first();
  const movedVisit = await moved.getAttribute("data-visit-id");
  const movedYard = (await moved.locator("p.font-bold").first().textContent())!.replace(/^Stop \d+: /, "").replace(/locked$/, "").trim();
  // Drag by the stop's name onto the first stop of the other run (it goes before it).
  await moved.locator("p.font-bold").first().dragTo(own.locator("[data-visit-id] p.font-bold").first());
  await expect(own.locator(`[data-visit-id="${movedVisit}"]`)).toBeVisible();
  await expect(own.locator("[data-visit-id]")).toHaveCount(before + 1);
  await expect(page.getByText(/^(Moved; times recomputed\.|Moved, but the new order breaks the plan:)$/)).toBeVisible();
  await page.evaluate(() => window.scrollTo(0, 0));
  await page.screenshot({ path: "test-results/screenshots/dispatch-day-1280.png", fullPage: true });

  await own.getByRole("button", { name: `Publish to ${crewOne.name}` }).click();
  await expect(page.getByText(new RegExp(`Published ${crewOne.name}'s run; e-mailed`))).toBeVisible();
  await expect(own.getByText("Published", { exact: true })).toBeVisible();

  // GPX and calendar downloads of the run.
  const runLink = own.getByRole("link", { name: /^GPX/ });
  const gpx = await page.request.get((await runLink.getAttribute("href"))!);
  expect(gpx.status()).toBe(200);
  expect(await gpx.text()).toContain('<gpx version="1.1"');

  // The crew sees the run.
  const crew = await (await browser.newContext({ viewport: { width: 390, height: 844 } })).newPage();
  await signIn(crew, DEMO.crew);
  await crew.goto(`/crew/runs/${day.service_date}`);
  await expect(crew.getByRole("list", { name: "Stops in order" })).toContainText(movedYard);
  await expect(crew.getByText("Safety with oxalic acid vapor")).toBeVisible();
});
