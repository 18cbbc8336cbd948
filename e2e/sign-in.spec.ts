import { DEMO, HOMES, expect, linkPath, signIn, signOut, test, waitForEmail, type DemoRole } from "./fixtures";

const HEADINGS: Record<DemoRole, RegExp> = {
  owner: /Days ahead/,
  dispatcher: /Days ahead/,
  office: /Money at a glance/,
  crew: /Today's run/,
  customer: /Hello,/,
};

for (const role of Object.keys(DEMO) as DemoRole[]) {
  test(`${role} signs in, lands on their home, and signs out`, async ({ page }) => {
    await signIn(page, DEMO[role]);
    await expect(page).toHaveURL(new RegExp(`${HOMES[role]}$`));
    await expect(page.getByRole("heading", { level: 1 })).toHaveText(HEADINGS[role]);
    await page.screenshot({ path: `test-results/screenshots/home-${role}-1280.png`, fullPage: true });
    await page.setViewportSize({ width: 390, height: 844 });
    await page.reload();
    await expect(page.getByRole("heading", { level: 1 })).toHaveText(HEADINGS[role]);
    await page.screenshot({ path: `test-results/screenshots/home-${role}-390.png`, fullPage: true });
    await signOut(page);
    await expect(page).toHaveURL(/\/sign-in\?signedOut=1$/);
    await expect(page.getByText("You are signed out.")).toBeVisible();
    await page.goto(HOMES[role]);
    await expect(page).toHaveURL(/\/sign-in\?redirectTo=/);
  });
}

test("a wrong password shows a clear message at the password field and keeps the e-mail", async ({ page }) => {
  await signIn(page, DEMO.office, "not-the-password");
  const password = page.getByLabel("Password");
  await expect(password).toHaveAttribute("aria-invalid", "true");
  await expect(page.getByText("That e-mail and password do not match an account.")).toBeVisible();
  await expect(page.getByLabel("E-mail")).toHaveValue(DEMO.office);
  await expect(page).toHaveURL(/\/sign-in$/);
});

test("a signed-out visitor sent to sign-in comes back to the page asked for", async ({ page }) => {
  await page.goto("/office");
  await expect(page).toHaveURL(/\/sign-in\?redirectTo=%2Foffice$/);
  await page.getByLabel("E-mail").fill(DEMO.owner);
  await page.getByLabel("Password").fill("demo-bees-2026");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page).toHaveURL(/\/office$/);
});

test("a new customer signs up, is told about field problems, and lands in the portal", async ({ page }) => {
  await page.goto("/sign-up");
  await page.getByLabel("Your name").fill("Pat Newcomer");
  await page.getByLabel("E-mail").fill("not-an-email");
  await page.getByLabel("Password", { exact: true }).fill("short");
  await page.getByLabel("Password again").fill("different");
  await page.getByRole("button", { name: "Create account" }).click();
  await expect(page.getByText("Enter a valid e-mail address.")).toBeVisible();
  await expect(page.getByText("Use at least 10 characters.")).toBeVisible();
  await expect(page.getByLabel("Your name")).toHaveValue("Pat Newcomer");
  const email = `pat.${Date.now()}@example.test`;
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password", { exact: true }).fill("a-long-enough-password");
  await page.getByLabel("Password again").fill("a-long-enough-password");
  await page.getByRole("button", { name: "Create account" }).click();
  // The same answer whether or not the address has an account; the e-mailed link finishes it.
  await expect(page.getByRole("heading", { name: "Check your inbox" })).toBeVisible();
  const confirm = await waitForEmail(email, /Confirm your e-mail/);
  await page.goto(linkPath(confirm, "/sign-up/confirm/"));
  await expect(page).toHaveURL(/\/portal$/);
  await expect(page.getByRole("heading", { level: 1 })).toHaveText("Hello, Pat");
  await expect(page.getByText("You have no yards yet.")).toBeVisible();
});
