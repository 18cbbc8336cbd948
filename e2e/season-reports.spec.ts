import { execFileSync } from "node:child_process";
import { readFileSync } from "node:fs";
import Papa from "papaparse";
import { DEMO, expect, queryTestDatabase, signIn, test } from "./fixtures";

// The owner's season: the dashboard filtered to a month, the application records of that month
// downloaded as CSV and PDF, and the audit trail. Expected figures come from SQL over the
// tallies of the database under test, never from the demo data's own numbers.

function statValue(page: import("@playwright/test").Page, label: string) {
  return page.locator(`xpath=//p[normalize-space()="${label}"]/following-sibling::p[1]`).first();
}

test("the owner opens the season dashboard, filters a month, and exports that month's application records", async ({ page }) => {
  test.setTimeout(180_000);
  // Last month in the business's time zone (the demo season runs up to the day it was seeded).
  const [MONTH] = await queryTestDatabase<{ from: string; to: string }>(
    `select to_char(date_trunc('month', (now() at time zone 'America/New_York')::date) - interval '1 month', 'YYYY-MM-DD') as from,
            to_char(date_trunc('month', (now() at time zone 'America/New_York')::date) - interval '1 day', 'YYYY-MM-DD') as to`,
  );
  const [month] = await queryTestDatabase<{ visits: number; colonies: number }>(
    `select count(distinct v.id)::int as visits, count(t.id) filter (where t.outcome = 'treated')::int as colonies
       from visits v left join tallies t on t.visit_id = v.id
      where v.status = 'done' and v.service_date between $1 and $2`,
    [MONTH.from, MONTH.to],
  );
  expect(month.visits).toBeGreaterThan(0);

  await signIn(page, DEMO.owner);
  await expect(page).toHaveURL(/\/dispatch$/);
  await page.getByRole("link", { name: "Office" }).first().click();
  await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Season", exact: true }).click();
  await expect(page).toHaveURL(/\/office\/dashboard$/);
  await expect(page.getByRole("heading", { level: 1, name: "Season dashboard" })).toBeVisible();

  await page.getByRole("navigation", { name: "Quick choices of period" }).getByRole("link", { name: "Last month" }).click();
  await expect(page).toHaveURL(new RegExp(`from=${MONTH.from}&to=${MONTH.to}`));
  await expect(statValue(page, "Colonies treated")).toHaveText(month.colonies.toLocaleString("en-US"));
  // Charts are drawn after hydration; wait for them before the picture.
  await expect(page.locator("svg.recharts-surface").first()).toBeVisible();
  await page.waitForLoadState("networkidle");
  await page.screenshot({ path: "test-results/screenshots/owner-dashboard-1280.png", fullPage: true });

  // The same month's application records, downloaded.
  await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Records", exact: true }).click();
  await expect(page.getByRole("heading", { level: 1, name: "Application records" })).toBeVisible();
  await page.getByLabel("From", { exact: true }).fill(MONTH.from);
  await page.getByLabel("To", { exact: true }).fill(MONTH.to);
  await page.getByRole("button", { name: "Show records" }).click();
  await expect(page).toHaveURL(new RegExp(`from=${MONTH.from}`));
  await page.screenshot({ path: "test-results/screenshots/owner-records-1280.png", fullPage: true });

  const [csvDownload] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Download CSV" }).click()]);
  expect(csvDownload.suggestedFilename()).toMatch(/\.csv$/);
  const csv = Papa.parse<Record<string, string>>(readFileSync(await csvDownload.path()).toString("utf8").replace(/^\uFEFF/, ""), { header: true, skipEmptyLines: true });
  expect(csv.errors).toEqual([]);
  expect(csv.data).toHaveLength(month.visits);
  const coloniesColumn = Object.keys(csv.data[0]).find((k) => /colonies treated/i.test(k));
  expect(coloniesColumn, "a colonies-treated column").toBeTruthy();
  expect(csv.data.reduce((sum, row) => sum + Number(row[coloniesColumn!]), 0)).toBe(month.colonies);

  const [pdfDownload] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Download PDF" }).click()]);
  expect(pdfDownload.suggestedFilename()).toMatch(/\.pdf$/);
  const pdfPath = await pdfDownload.path();
  expect(readFileSync(pdfPath).subarray(0, 5).toString()).toBe("%PDF-");
  const text = execFileSync("pdftotext", ["-layout", pdfPath, "-"]).toString("utf8");
  expect(text).toContain("Application records");

  // Who changed what: the owner's audit trail, searched.
  await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Audit trail", exact: true }).click();
  await expect(page.getByRole("heading", { level: 1, name: "Audit trail" })).toBeVisible();
  await page.getByRole("searchbox", { name: "Search" }).fill("invoice");
  await page.getByRole("button", { name: "Search" }).click();
  await expect(page).toHaveURL(/q=invoice/);
  await expect(page.getByRole("table").first()).toBeVisible();
  await page.screenshot({ path: "test-results/screenshots/owner-audit-1280.png", fullPage: true });
});

test("a customer reads their season report, downloads it as a PDF and downloads their data", async ({ page }) => {
  await page.setViewportSize({ width: 390, height: 844 });
  // The year of the customer's latest finished visit, and their yards treated that year.
  const own = `from yards y join customers c on c.id = y.customer_id join users u on u.id = c.user_id join visits v on v.yard_id = y.id where u.email = $1 and v.status = 'done'`;
  const [{ year }] = await queryTestDatabase<{ year: number }>(`select extract(year from max(v.service_date))::int as year ${own}`, [DEMO.customer]);
  const yards = await queryTestDatabase<{ name: string }>(`select distinct y.name ${own} and extract(year from v.service_date) = $2`, [DEMO.customer, year]);
  expect(yards.length).toBeGreaterThan(0);
  await signIn(page, DEMO.customer);
  await page.goto(`/portal/season?year=${year}`);
  for (const yard of yards) await expect(page.getByRole("heading", { name: new RegExp(yard.name) }).first()).toBeVisible();
  await page.screenshot({ path: "test-results/screenshots/portal-season-390.png", fullPage: true });

  const [pdf] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: /PDF/ }).first().click()]);
  const pdfText = execFileSync("pdftotext", ["-layout", await pdf.path(), "-"]).toString("utf8");
  for (const yard of yards) expect(pdfText).toContain(yard.name);

  await page.goto("/portal/account");
  await page.screenshot({ path: "test-results/screenshots/portal-account-390.png", fullPage: true });
  const [json] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: /download/i }).first().click()]);
  const data = JSON.parse(readFileSync(await json.path(), "utf8")) as Record<string, unknown>;
  expect(JSON.stringify(data)).toContain(DEMO.customer);
  expect(JSON.stringify(data)).not.toContain("password_hash");
});
