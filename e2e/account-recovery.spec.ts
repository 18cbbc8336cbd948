import bcrypt from "bcryptjs";
import { expect, linkPath, queryTestDatabase, signIn, signOut, test, waitForEmail } from "./fixtures";

// Account recovery and the profile, end to end, for a customer made here in the test
// database (so the demo sign-ins other specs use keep their passwords): "Forgot your
// password?" on the sign-in page → the link e-mailed through the worker to the SMTP sink →
// a new password, signed in to the portal → on /profile, the password changed again → signed
// out, the old password refused and the new one let in.

const FORGOTTEN = "a password nobody remembers";
const FROM_RESET = "lantern orchard pebble quartz";
const FROM_PROFILE = "sparrow kettle granite mosaic";

test("forgot password → e-mailed link → new password, signed in → changed on the profile → signs in with it", async ({ page }) => {
  test.setTimeout(120_000);
  const email = `recovery.${Date.now()}.${Math.random().toString(36).slice(2, 8)}@example.test`;
  const name = "Rowan Clover";
  const [user] = await queryTestDatabase<{ id: number }>(
    "insert into users (email, password_hash, role, name) values ($1, $2, 'customer', $3) returning id",
    [email, await bcrypt.hash(FORGOTTEN, 10), name],
  );
  await queryTestDatabase("insert into customers (user_id, name, email) values ($1, $2, $3)", [user.id, name, email]);

  // 1. Ask for a link from the sign-in page; the answer does not say whether the account exists.
  await page.goto("/sign-in");
  await page.getByRole("link", { name: "Forgot your password?" }).click();
  await expect(page).toHaveURL(/\/forgot-password$/);
  await page.getByLabel("E-mail").fill(email);
  await page.getByRole("button", { name: "E-mail me a link" }).click();
  await expect(page.getByText("If an account uses this address, we have e-mailed a link")).toBeVisible();

  // 2. Follow the e-mailed link and choose a new password: signed in, in the portal.
  const resetEmail = await waitForEmail(email, /^Reset your Varroute password$/);
  const resetPath = linkPath(resetEmail, "/reset-password/");
  await page.goto(resetPath);
  await expect(page.getByRole("heading", { name: "Choose a new password" })).toBeVisible();
  await page.getByLabel("New password", { exact: true }).fill(FROM_RESET);
  await page.getByLabel("New password again").fill(FROM_RESET);
  await page.getByRole("button", { name: "Set the new password" }).click();
  await expect(page).toHaveURL(/\/portal$/);
  await waitForEmail(email, /^Your Varroute password was changed$/);

  // The link worked once.
  await page.goto(resetPath);
  await expect(page.getByRole("heading", { name: "This link does not work" })).toBeVisible();
  await expect(page.getByRole("link", { name: "Ask for a new link" })).toHaveAttribute("href", "/forgot-password");

  // 3. The profile, from the portal's navigation: change the password again.
  await page.goto("/portal");
  await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Profile", exact: true }).click();
  await expect(page).toHaveURL(/\/profile$/);
  await expect(page.getByRole("heading", { name: "Your profile" })).toBeVisible();
  await expect(page.getByText(email).first()).toBeVisible();
  const passwordCard = page.locator("section").filter({ has: page.getByRole("heading", { name: "Change your password" }) });
  await passwordCard.getByLabel("Current password").fill(FROM_RESET);
  await passwordCard.getByLabel("New password", { exact: true }).fill(FROM_PROFILE);
  await passwordCard.getByLabel("New password again").fill(FROM_PROFILE);
  await passwordCard.getByRole("button", { name: "Change my password" }).click();
  await expect(passwordCard.getByText(/^Your password is changed\./)).toBeVisible();
  // Still signed in here.
  await expect(page.getByRole("heading", { name: "Your profile" })).toBeVisible();

  // 4. Signed out, the password from the reset no longer works; the new one does.
  await signOut(page);
  await expect(page).toHaveURL(/\/sign-in\?signedOut=1$/);
  await signIn(page, email, FROM_RESET);
  await expect(page.getByText("That e-mail and password do not match an account.")).toBeVisible();
  await signIn(page, email, FROM_PROFILE);
  await expect(page).toHaveURL(/\/portal$/);
});
