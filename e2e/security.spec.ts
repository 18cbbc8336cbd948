import type { Page } from "@playwright/test";
import { BASE_URL } from "../playwright.config";
import { DEMO, DEMO_PASSWORD, HOMES, expect, signIn, signOut, test } from "./fixtures";

// What an attacker tries against a running copy, in the browser: the page headers and the
// content security policy (with every page still working under it), a session cookie kept
// after sign-out, an off-site redirect after sign-in, posts from another origin, and bad
// input that used to answer 500.

/** Collects the browser's content-security-policy complaints while `visit` runs. */
async function cspViolations(page: Page, visit: () => Promise<void>): Promise<string[]> {
  const seen: string[] = [];
  const listen = (message: { text(): string }) => {
    if (/Content Security Policy|Content-Security-Policy/i.test(message.text())) seen.push(message.text());
  };
  page.on("console", listen);
  await page.addInitScript(() => {
    document.addEventListener("securitypolicyviolation", (event) => {
      console.error(`Content Security Policy violation: ${event.violatedDirective} ${event.blockedURI}`);
    });
  });
  await visit();
  page.off("console", listen);
  return seen;
}

test("every HTML page carries the security headers, and the pages of each role work under the policy", async ({ page }) => {
  test.setTimeout(120_000);
  const response = await page.goto("/sign-in");
  const headers = response!.headers();
  const csp = headers["content-security-policy"];
  expect(csp).toContain("frame-ancestors 'none'");
  expect(csp).toContain("object-src 'none'");
  const nonce = /script-src[^;]*'nonce-([A-Za-z0-9+/=_-]+)'/.exec(csp)?.[1];
  expect(nonce, "script-src carries a nonce").toBeTruthy();
  expect(csp).not.toMatch(/script-src[^;]*'unsafe-inline'/);
  expect(headers["x-content-type-options"]).toBe("nosniff");
  expect(headers["referrer-policy"]).toBe("strict-origin-when-cross-origin");
  // HSTS only over https (COOKIE_SECURE); the test server is plain http on loopback.
  expect(headers["strict-transport-security"]).toBeUndefined();
  // The nonce changes per response, and the framework's scripts carry it.
  const again = (await page.request.get("/sign-in")).headers()["content-security-policy"];
  expect(/'nonce-([^']+)'/.exec(again)?.[1]).not.toBe(nonce);
  const inline = await page.locator("script:not([src])").evaluateAll((scripts) => scripts.map((s) => (s as HTMLScriptElement).nonce));
  expect(inline.length).toBeGreaterThan(0);
  for (const n of inline) expect(n).not.toBe("");

  // Sign in as each staff role and the customer and open pages with maps, charts and forms:
  // hydration, the map and the charts all run with no policy complaint.
  // Each path with something only the browser draws after hydration (null: no such part).
  const pages: Record<string, [string, string | null][]> = {
    dispatcher: [
      ["/dispatch", null],
      ["/dispatch/map", ".leaflet-container"],
      ["/dispatch/calendar", ".fc"],
    ],
    owner: [["/office/dashboard", ".recharts-surface"]],
    crew: [["/crew", null]],
    customer: [
      ["/portal", null],
      ["/portal/yards/new", ".leaflet-container"],
    ],
  };
  for (const [role, paths] of Object.entries(pages)) {
    const violations = await cspViolations(page, async () => {
      await signIn(page, DEMO[role as keyof typeof DEMO]);
      await expect(page).toHaveURL(new RegExp(`${HOMES[role as keyof typeof HOMES]}`));
      for (const [path, drawnInBrowser] of paths) {
        await page.goto(path);
        await page.waitForLoadState("networkidle");
        if (drawnInBrowser) await expect(page.locator(drawnInBrowser).first()).toBeVisible();
      }
      await signOut(page);
      await expect(page).toHaveURL(/\/$|\/sign-in/);
    });
    expect(violations, `policy complaints for ${role}`).toEqual([]);
  }
});

test("a session cookie copied before sign-out does not work after it", async ({ page, browser }) => {
  await signIn(page, DEMO.office);
  await expect(page).toHaveURL(/\/office$/);
  const kept = (await page.context().cookies()).filter((c) => c.name === "__varroute");
  expect(kept).toHaveLength(1);
  await signOut(page);

  const other = await browser.newContext();
  await other.addCookies(kept);
  const stolen = await other.newPage();
  await stolen.goto(`${BASE_URL}/office`);
  await expect(stolen).toHaveURL(/\/sign-in\?redirectTo=%2Foffice$/);
  await other.close();
});

test("each sign-in gets a session id of its own", async ({ page }) => {
  await signIn(page, DEMO.office);
  const first = (await page.context().cookies()).find((c) => c.name === "__varroute")!;
  await page.context().clearCookies();
  await signIn(page, DEMO.office);
  const second = (await page.context().cookies()).find((c) => c.name === "__varroute")!;
  expect(second.value).not.toBe(first.value);
});

test("sign-in never sends the person to another site", async ({ page }) => {
  for (const redirectTo of ["/%09/evil.example", "//evil.example", "/\\evil.example", "https://evil.example/", "%0d%0aLocation:%20https://evil.example"]) {
    await page.context().clearCookies();
    const response = await page.goto(`/sign-in?redirectTo=${redirectTo}`);
    expect(response!.status(), redirectTo).toBe(200);
    await page.getByLabel("E-mail").fill(DEMO.customer);
    await page.getByLabel("Password").fill(DEMO_PASSWORD);
    await page.getByRole("button", { name: "Sign in" }).click();
    await expect(page, redirectTo).toHaveURL(`${BASE_URL}/portal`);
  }
});

test("another site cannot post to the crew's sync address, and bad input answers 400 or 404, not 500", async ({ page }) => {
  await signIn(page, DEMO.crew);
  await expect(page).toHaveURL(/\/crew$/);
  const crossSite = await page.request.post("/api/crew/sync", {
    headers: { origin: "https://evil.example", "content-type": "application/json" },
    data: JSON.stringify({ actions: [] }),
  });
  expect(crossSite.status()).toBe(403);
  const plain = await page.request.post("/api/crew/sync", { headers: { origin: BASE_URL, "content-type": "text/plain" }, data: "{}" });
  expect(plain.status()).toBe(415);

  await signOut(page);
  await expect(page).toHaveURL(/\/$|\/sign-in/);
  await signIn(page, DEMO.dispatcher);
  await expect(page).toHaveURL(/\/dispatch$/);
  expect((await page.request.get("/dispatch/days/2027-02-30")).status()).toBe(404);
  expect((await page.request.get("/dispatch/yards/99999999999999999999")).status()).toBe(404);
  expect((await page.request.get("/dispatch/visits/abc")).status()).toBe(404);
  const json = await page.request.post("/dispatch/settings", { headers: { origin: BASE_URL, "content-type": "application/json" }, data: JSON.stringify({ intent: "save" }) });
  expect(json.status()).toBe(400);
});
