import { DEMO, expect, signIn, test } from "./fixtures";

// The dispatcher's map of every yard, drawn with no network at all: the offline guard in
// ./fixtures fails the test on any request that leaves the machine (tiles, fonts, icons).

test("the dispatcher sees every yard on the offline map and filters by booking state", async ({ page }) => {
  const problems: string[] = [];
  page.on("console", (message) => {
    if (message.type() === "error" || message.type() === "warning") problems.push(message.text());
  });
  page.on("pageerror", (error) => problems.push(error.message));
  await signIn(page, DEMO.dispatcher);
  const baseMap = page.waitForResponse((r) => r.url().includes("/api/base-map?bbox=") && r.status() === 200);
  await page.goto("/dispatch/map");
  await expect(page.getByRole("heading", { name: "Yards on the map", level: 1 })).toBeVisible();
  await baseMap;

  const rows = page.getByRole("list", { name: /Yards shown/ }).getByRole("listitem");
  const markers = page.locator(".leaflet-marker-pane .leaflet-marker-icon");
  const listed = await rows.count();
  expect(listed).toBeGreaterThan(0);
  await expect(markers).toHaveCount(listed);
  await expect(page.getByRole("figure", { name: `Map of ${listed} yards` })).toBeVisible();

  // The base map: county lines and state lines as SVG paths, and not a single tile.
  await expect(page.locator(".leaflet-overlay-pane path.vr-county-line").first()).toBeAttached();
  await expect(page.locator(".leaflet-overlay-pane path.vr-state-line").first()).toBeAttached();
  await expect(page.locator(".leaflet-tile")).toHaveCount(0);

  // Every pin has a name, and a pin opens a popup that links to its yard.
  const firstTitle = await markers.first().getAttribute("title");
  expect(firstTitle).toBeTruthy();
  await markers.first().focus();
  await page.keyboard.press("Enter");
  const popup = page.locator(".leaflet-popup");
  await expect(popup).toBeVisible();
  await expect(popup.getByRole("link")).toHaveAttribute("href", /^\/dispatch\/yards\/\d+$/);
  await popup.getByRole("button", { name: "Close popup" }).click();
  await expect(popup).toHaveCount(0);

  await page.evaluate(() => window.scrollTo(0, 0));
  await page.screenshot({ path: "test-results/screenshots/dispatch-map-1280.png", fullPage: true });

  // Filter to each booking state in turn: the pins follow the list, the list the count.
  const filters = page.getByRole("navigation", { name: "Show yards by booking state" });
  let filteredToFewer = false;
  for (const name of ["Booked", "Requested", "Next round not booked", "Nothing booked"]) {
    const link = filters.getByRole("link", { name: new RegExp(`^${name}\\s*\\d+$`) });
    const count = Number((await link.textContent())?.match(/(\d+)$/)?.[1]);
    await link.click();
    await expect(link).toHaveAttribute("aria-current", "page");
    await expect(rows).toHaveCount(count);
    await expect(markers).toHaveCount(count);
    if (count > 0 && count < listed) filteredToFewer = true;
  }
  expect(filteredToFewer, "at least one state holds some but not all yards").toBe(true);
  await filters.getByRole("link", { name: /^All yards\s*\d+$/ }).click();
  await expect(markers).toHaveCount(listed);

  // A phone: the map, its key under it, the list below.
  await page.setViewportSize({ width: 390, height: 844 });
  await page.goto("/dispatch/map");
  await expect(markers).toHaveCount(listed);
  await expect(page.locator(".leaflet-overlay-pane path.vr-state-line").first()).toBeAttached();
  await page.evaluate(() => window.scrollTo(0, 0));
  await page.screenshot({ path: "test-results/screenshots/dispatch-map-390.png" });
  expect(problems, "console errors and warnings").toEqual([]);
});

test("the base map refuses a malformed box and needs a signed-in user", async ({ page }) => {
  const anonymous = await page.request.get("/api/base-map", { maxRedirects: 0 });
  expect(anonymous.status()).toBe(302);
  await signIn(page, DEMO.dispatcher);
  const refused = await page.request.get("/api/base-map?bbox=-76,42,-77");
  expect(refused.status()).toBe(400);
  expect((await refused.json()).error).toMatch(/four numbers/);
  const answer = await page.request.get("/api/base-map");
  expect(answer.status()).toBe(200);
  expect(answer.headers()["cache-control"]).toBe("private, max-age=86400");
  const map = await answer.json();
  expect(map.type).toBe("FeatureCollection");
  expect(map.features.map((f: { properties: { name?: string } }) => f.properties.name)).toContain("New York");
});
