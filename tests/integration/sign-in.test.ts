import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { authenticator, SignInError } from "~/services/auth.server";
import { db } from "~/services/db.server";
import { createCustomerAccount, findSessionUser } from "~/models/users.server";
import { withPeerAddress } from "~/services/sign-in-limits.server";
import { resetDatabase } from "./reset-database";

afterAll(() => db.destroy());
beforeEach(() => resetDatabase(db));

function signInRequest(email: string, password: string) {
  return new Request("http://127.0.0.1/sign-in", {
    method: "POST",
    headers: { "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ email, password }),
  });
}

/** Signs in as if over a socket from `address`: the sign-in limits key on the socket's peer. */
function authenticate(email: string, password: string, address = "203.0.113.7") {
  return withPeerAddress(address, () => authenticator.authenticate("form", signInRequest(email, password)));
}

async function signInError(email: string, password: string, address?: string): Promise<SignInError> {
  const error = await authenticate(email, password, address).catch((e) => e);
  expect(error).toBeInstanceOf(SignInError);
  return error as SignInError;
}

describe("sign-in", () => {
  it("signs in with the right password, whatever the case of the e-mail", async () => {
    const id = await createCustomerAccount(db, { name: "Robin Hive", email: "robin@example.test", password: "correct horse battery" });
    const user = await authenticate("  Robin@Example.TEST ", "correct horse battery");
    expect(user).toMatchObject({ id, role: "customer", email: "robin@example.test" });
    expect(user.customerId).not.toBeNull();
  });

  it("puts a missing e-mail at the e-mail field and a wrong password at the password field", async () => {
    await createCustomerAccount(db, { name: "Robin Hive", email: "robin@example.test", password: "correct horse battery" });
    const blank = await signInError("", "x");
    expect(blank.field).toBe("email");
    const wrong = await signInError("robin@example.test", "wrong password");
    expect(wrong.field).toBe("password");
    expect(wrong.message).toMatch(/do not match/);
    const unknown = await signInError("nobody@example.test", "whatever");
    expect(unknown.message).toBe(wrong.message);
  });

  it("slows one e-mail's tries from one address down after five failures, and not another e-mail's", async () => {
    await createCustomerAccount(db, { name: "Robin Hive", email: "robin@example.test", password: "correct horse battery" });
    await createCustomerAccount(db, { name: "Sam Comb", email: "sam@example.test", password: "another good password" });
    for (let i = 0; i < 5; i++) {
      const error = await signInError("robin@example.test", `guess ${i}`, "198.51.100.9");
      expect(error.field).toBe("password");
    }
    const slowed = await signInError("robin@example.test", "correct horse battery", "198.51.100.9");
    expect(slowed.field).toBe("form");
    expect(slowed.message).toMatch(/Too many failed sign-ins\. Try again in 1 second/);
    await expect(authenticate("sam@example.test", "another good password", "198.51.100.9")).resolves.toMatchObject({
      email: "sam@example.test",
    });
  });

  it("refuses an address after twenty failures across many e-mails", async () => {
    await createCustomerAccount(db, { name: "Sam Comb", email: "sam@example.test", password: "another good password" });
    for (let i = 0; i < 20; i++) await signInError(`guess${i}@example.test`, "nope", "192.0.2.50");
    const blocked = await signInError("sam@example.test", "another good password", "192.0.2.50");
    expect(blocked.field).toBe("form");
    await expect(authenticate("sam@example.test", "another good password", "192.0.2.51")).resolves.toBeTruthy();
  });

  it("a successful sign-in clears the e-mail's failures", async () => {
    await createCustomerAccount(db, { name: "Robin Hive", email: "robin@example.test", password: "correct horse battery" });
    for (let i = 0; i < 4; i++) await signInError("robin@example.test", `guess ${i}`);
    await authenticate("robin@example.test", "correct horse battery");
    for (let i = 0; i < 4; i++) await signInError("robin@example.test", `again ${i}`);
    await expect(authenticate("robin@example.test", "correct horse battery")).resolves.toBeTruthy();
  });

  it("does not load a disabled account", async () => {
    const id = await createCustomerAccount(db, { name: "Robin Hive", email: "robin@example.test", password: "correct horse battery" });
    await db("users").where({ id: Number(id) }).update({ disabled_at: db.fn.now() });
    expect(await findSessionUser(db, id)).toBeNull();
    expect((await signInError("robin@example.test", "correct horse battery")).field).toBe("password");
  });
});

describe("customer sign-up", () => {
  it("creates the sign-in and the customer record together, with an audit entry", async () => {
    const id = await createCustomerAccount(db, { name: "Robin Hive", email: "Robin@Example.test", password: "correct horse battery" });
    const customer = await db("customers").where({ user_id: Number(id) }).first();
    expect(customer).toMatchObject({ name: "Robin Hive", email: "robin@example.test" });
    expect(await db("audit_log").where({ entity_type: "user", entity_id: id, action: "customer.sign_up" }).first()).toBeTruthy();
  });

  it("leaves nothing behind when the e-mail is taken", async () => {
    await createCustomerAccount(db, { name: "Robin Hive", email: "robin@example.test", password: "correct horse battery" });
    await expect(createCustomerAccount(db, { name: "Other", email: "robin@example.test", password: "x".repeat(12) })).rejects.toThrow();
    expect(await db("customers").count("* as n").first()).toEqual({ n: 1 });
  });
});
