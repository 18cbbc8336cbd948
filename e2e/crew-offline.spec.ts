import { DEMO, expect, queryTestDatabase, signIn, test } from "./fixtures";

test.use({ viewport: { width: 390, height: 844 } });

test("with no signal the crew tallies and finishes a stop, reloads, and everything reaches the server exactly once", async ({ page, context }) => {
  test.setTimeout(180_000);
  const stops = await queryTestDatabase<{ visit_id: number; yard_name: string; colonies: number; status: string }>(
    `select v.id as visit_id, y.name as yard_name, v.status,
            (select count(*)::int from colonies col where col.yard_id = y.id and col.active) as colonies
       from runs r join crew_members cm on cm.crew_id = r.crew_id join users u on u.id = cm.user_id
       join stops s on s.run_id = r.id join visits v on v.id = s.visit_id join yards y on y.id = v.yard_id
      where u.email = $1 and r.status in ('published', 'in_progress') and r.service_date = (now() at time zone 'America/New_York')::date
      order by s.position`,
    [DEMO.crew],
  );
  const stop = stops.find((s) => s.status !== "done" && s.colonies > 0)!;
  const number = stops.indexOf(stop) + 1;

  await signIn(page, DEMO.crew);
  await expect(page).toHaveURL(/\/crew$/);
  // The page and its files are kept by the service worker once it is in control.
  await page.evaluate(async () => {
    await navigator.serviceWorker.ready;
  });
  await expect.poll(() => page.evaluate(async () => (await caches.keys()).length), { timeout: 20_000 }).toBeGreaterThan(0);
  await page.waitForTimeout(1000);
  if (await page.getByRole("heading", { name: "Safety check before the first stop" }).isVisible()) {
    for (const item of ["Respirator", "Sealed eye protection", "Acid-resistant gloves", "Vaporizer checked"]) await page.getByLabel(new RegExp(item)).check();
    await page.getByRole("button", { name: "Start the run" }).click();
    await expect(page.getByTestId("sync-status")).toHaveText(/All work sent/, { timeout: 30_000 });
  }

  const syncRequests: string[] = [];
  page.on("request", (r) => {
    if (r.url().endsWith("/api/crew/sync")) syncRequests.push(r.method());
  });

  await context.setOffline(true);
  await page.getByRole("button", { name: new RegExp(`Stop ${number}: ${stop.yard_name}`) }).click();
  await page.getByRole("button", { name: "Supers are off — start treating" }).click();
  const colonies = page.getByRole("list", { name: "Colonies to tally" }).locator(":scope > li");
  for (let i = 0; i < stop.colonies; i++) await colonies.nth(i).getByRole("button", { name: /^Treated/ }).click();
  await page.getByRole("button", { name: "Finish visit" }).click();
  await expect(page.getByRole("heading", { name: "Visit finished" })).toBeVisible();
  const waiting = new RegExp(`No signal — ${stop.colonies + 2} changes not sent yet`);
  await expect(page.getByTestId("sync-status")).toHaveText(waiting);

  // Reload with no signal: the page comes from the phone, and the work is still there.
  await page.reload();
  await expect(page.getByTestId("sync-status")).toHaveText(waiting);
  await expect(page.getByRole("button", { name: new RegExp(`Stop ${number}: ${stop.yard_name}`) })).toContainText(`Finished: ${stop.colonies} treated, 0 skipped`);
  const [before] = await queryTestDatabase<{ n: number }>("select count(*)::int as n from tallies where visit_id = $1", [stop.visit_id]);
  expect(before.n).toBe(0);

  // Back online: everything is sent once.
  await context.setOffline(false);
  await page.evaluate(() => window.dispatchEvent(new Event("online")));
  await expect(page.getByTestId("sync-status")).toHaveText("All work sent", { timeout: 30_000 });
  const [after] = await queryTestDatabase<{ tallies: number; treated: number; status: string; invoices: number }>(
    `select (select count(*)::int from tallies where visit_id = $1) as tallies,
            (select count(*)::int from tallies where visit_id = $1 and outcome = 'treated') as treated,
            (select status from visits where id = $1) as status,
            (select count(*)::int from invoices where visit_id = $1) as invoices`,
    [stop.visit_id],
  );
  expect(after).toEqual({ tallies: stop.colonies, treated: stop.colonies, status: "done", invoices: 1 });

  // A second sync sends nothing.
  const sentBefore = syncRequests.length;
  await page.evaluate(() => window.dispatchEvent(new Event("online")));
  await page.waitForTimeout(1500);
  expect(syncRequests.length).toBe(sentBefore);
  const [again] = await queryTestDatabase<{ n: number }>("select count(*)::int as n from tallies where visit_id = $1", [stop.visit_id]);
  expect(again.n).toBe(stop.colonies);
});
