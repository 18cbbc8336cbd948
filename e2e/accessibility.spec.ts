import AxeBuilder from "@axe-core/playwright";
import type { Page } from "@playwright/test";
import { DEMO, expect, queryTestDatabase, signIn, test, type DemoRole } from "./fixtures";

// An automated accessibility check (axe-core) on every page that exists: no serious or
// critical problems, at desktop and phone widths.
async function expectNoSeriousProblems(page: Page, what: string) {
  const results = await new AxeBuilder({ page }).analyze();
  const serious = results.violations
    .filter((v) => v.impact === "serious" || v.impact === "critical")
    .map((v) => `${v.id}: ${v.help} (${v.nodes.map((n) => n.target.join(" ")).join(", ")})`);
  expect(serious, what).toEqual([]);
}

test("public pages", async ({ page }) => {
  for (const path of ["/", "/sign-in", "/sign-up", "/forgot-password", "/no-such-page"]) {
    await page.goto(path);
    await expectNoSeriousProblems(page, path);
  }
});

const PAGES: Record<DemoRole, string[]> = {
  owner: ["/dispatch", "/dispatch/settings", "/office", "/office/dashboard", "/office/audit", "/office/staff", "/profile"],
  dispatcher: ["/dispatch", "/dispatch/settings", "/dispatch/calendar", "/dispatch/map", "/dispatch/customers", "/dispatch/yards", "/dispatch/crews", "/dispatch/crews/new"],
  office: ["/office", "/office/customers", "/office/customers/import", "/office/invoices", "/office/records", "/office/dashboard", "/profile"],
  crew: ["/crew", "/profile"],
  customer: ["/portal", "/portal/book", "/portal/bookings", "/portal/yards/new", "/portal/invoices", "/portal/season", "/portal/account", "/profile"],
};

for (const role of Object.keys(PAGES) as DemoRole[]) {
  test(`${role} pages at 1280 and 390 px`, async ({ page }) => {
    test.setTimeout(240_000);
    const [yard] = await queryTestDatabase<{ id: number }>(
      "select yards.id from yards join customers on customers.id = yards.customer_id join users on users.id = customers.user_id where users.email = $1 order by yards.id limit 1",
      [DEMO.customer],
    );
    const [visit] = await queryTestDatabase<{ id: number }>("select id from visits where status = 'scheduled' order by service_date, id limit 1");
    const [invoice] = await queryTestDatabase<{ id: number }>("select id from invoices where status = 'paid' order by id limit 1");
    const [ownInvoice] = await queryTestDatabase<{ id: number }>(
      "select invoices.id from invoices join customers on customers.id = invoices.customer_id join users on users.id = customers.user_id where users.email = $1 order by invoices.id limit 1",
      [DEMO.customer],
    );
    const extra =
      role === "customer"
        ? [`/portal/yards/${yard.id}`, `/portal/yards/${yard.id}/edit`, `/portal/invoices/${ownInvoice.id}`]
        : role === "dispatcher"
          ? [`/dispatch/yards/${yard.id}`, `/dispatch/yards/${yard.id}/edit`, `/dispatch/visits/${visit.id}`]
          : role === "office"
            ? [`/office/invoices/${invoice.id}`]
            : [];
    await signIn(page, DEMO[role]);
    for (const width of [1280, 390]) {
      await page.setViewportSize({ width, height: 900 });
      for (const path of [...PAGES[role], ...extra]) {
        await page.goto(path);
        // Maps and calendars load after hydration: check them drawn, not their placeholders.
        await page.waitForLoadState("networkidle");
        await expectNoSeriousProblems(page, `${role} ${path} at ${width} px`);
      }
    }
  });
}
