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
