import { DEMO, expect, queryTestDatabase, signIn, test } from "./fixtures";

// A customer phones: they have more hives now. The dispatcher corrects the yard; a bad count is
// refused at its field; the saved count reaches the visits booked ahead, and the change is audited.

test("the dispatcher corrects a yard's colony count, and the visits ahead follow", async ({ page }) => {
  // A yard with a scheduled visit after today, not on any run (so no other journey uses it).
  const [yard] = await queryTestDatabase<{ id: number; name: string; colony_count: number }>(
    `select y.id, y.name, y.colony_count from yards y
      where y.archived_at is null and y.colony_count < 150
        and exists (select 1 from visits v where v.yard_id = y.id and v.status = 'scheduled' and v.service_date > (now() at time zone 'America/New_York')::date)
        and not exists (select 1 from visits v join stops s on s.visit_id = v.id where v.yard_id = y.id and v.status in ('scheduled', 'in_progress'))
      order by y.id limit 1`,
  );
  expect(yard, "a yard booked ahead and not on a run").toBeTruthy();
  const [dispatcher] = await queryTestDatabase<{ id: number }>("select id from users where email = $1", [DEMO.dispatcher]);

  await signIn(page, DEMO.dispatcher);
  await page.goto(`/dispatch/yards/${yard.id}`);
  await page.getByRole("link", { name: "Edit this yard" }).click();
  await expect(page.getByRole("heading", { level: 1, name: `Edit ${yard.name}` })).toBeVisible();

  const count = page.getByLabel("Colonies (hives) to treat");
  await count.fill("-3");
  await page.getByRole("button", { name: "Save changes" }).click();
  await expect(count).toHaveAttribute("aria-invalid", "true");
  await expect(page.getByText("Colonies cannot be fewer than 0.")).toBeVisible();
  expect((await queryTestDatabase<{ colony_count: number }>("select colony_count from yards where id = $1", [yard.id]))[0].colony_count).toBe(yard.colony_count);

  const more = yard.colony_count + 2;
  await count.fill(String(more));
  await page.getByRole("button", { name: "Save changes" }).click();
  await expect(page).toHaveURL(new RegExp(`/dispatch/yards/${yard.id}\\?saved=1$`));
  await expect(page.getByText("Yard saved.")).toBeVisible();

  const [after] = await queryTestDatabase<{ colony_count: number; ahead: number[]; audited: number }>(
    `select y.colony_count,
            array(select v.colonies_expected from visits v where v.yard_id = y.id and v.status = 'scheduled') as ahead,
            (select count(*)::int from audit_log a where a.action = 'yard.update' and a.entity_id = y.id::text and a.actor_user_id = $2) as audited
       from yards y where y.id = $1`,
    [yard.id, dispatcher.id],
  );
  expect(after.colony_count).toBe(more);
  expect(after.ahead.length).toBeGreaterThan(0);
  expect(after.ahead.every((n) => n === more)).toBe(true);
  expect(after.audited).toBe(1);
});

// The crew found one colony bigger than the yard's figure. The yard page plans from what the
// crew found and says so; an edit that leaves the boxes alone keeps the crew's finding.
test("the dispatcher sees what the crew found at a yard, and an edit that leaves the boxes alone keeps it", async ({ page }) => {
  const [yard] = await queryTestDatabase<{ id: number; name: string; colony_count: number; brood_boxes_per_colony: number; box_type: string; access_notes: string | null }>(
    `select y.id, y.name, y.colony_count, y.brood_boxes_per_colony, y.box_type, y.access_notes from yards y
      where y.archived_at is null and y.colony_count >= 2 and y.brood_boxes_per_colony < 6
        and (select count(*) from colonies c where c.yard_id = y.id and c.active) = y.colony_count
        and exists (select 1 from visits v where v.yard_id = y.id and v.status = 'scheduled' and v.service_date > (now() at time zone 'America/New_York')::date)
        and not exists (select 1 from visits v join stops s on s.visit_id = v.id where v.yard_id = y.id and v.status in ('scheduled', 'in_progress'))
      order by y.id desc limit 1`,
  );
  expect(yard, "a yard of two or more colonies booked ahead and not on a run").toBeTruthy();
  const found = yard.brood_boxes_per_colony + 1;
  // What a crew's tally at the hive writes when it finds H1 bigger (crew-hive.spec.ts records it through the screen).
  await queryTestDatabase("update colonies set brood_boxes = $2 where yard_id = $1 and label = 'H1'", [yard.id, found]);
  try {
    await signIn(page, DEMO.dispatcher);
    await page.goto(`/dispatch/yards/${yard.id}`);
    const findings = page.getByTestId("crew-findings");
    await expect(findings).toContainText("The crew found");
    await expect(findings).toContainText(`1 of ${found} ${yard.box_type} brood boxes`);
    await expect(findings).toContainText("(1 colony differs from the yard's");
    await expect(page.getByText("Dose per colony, on average")).toBeVisible();
    await page.screenshot({ path: "test-results/screenshots/dispatch-yard-crew-findings-1280.png", fullPage: true });

    await page.getByRole("link", { name: "Edit this yard" }).click();
    await expect(page.getByTestId("crew-findings")).toContainText("Saving keeps each colony as the crew found it.");
    await page.getByTestId("crew-findings").scrollIntoViewIfNeeded();
    await page.screenshot({ path: "test-results/screenshots/dispatch-yard-edit-crew-findings-1280.png" });
    await page.getByLabel("Access notes").fill("Gate code 4471; park by the red barn.");
    await page.getByRole("button", { name: "Save changes" }).click();
    await expect(page).toHaveURL(new RegExp(`/dispatch/yards/${yard.id}\\?saved=1$`));
    const [kept] = await queryTestDatabase<{ brood_boxes: number }>("select brood_boxes from colonies where yard_id = $1 and label = 'H1'", [yard.id]);
    expect(kept.brood_boxes).toBe(found);
    await expect(page.getByTestId("crew-findings")).toBeVisible();
  } finally {
    await queryTestDatabase("update colonies set brood_boxes = $2 where yard_id = $1 and label = 'H1'", [yard.id, yard.brood_boxes_per_colony]);
    await queryTestDatabase("update yards set access_notes = $2 where id = $1", [yard.id, yard.access_notes]);
  }
});
