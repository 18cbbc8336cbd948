import { randomUUID } from "node:crypto";
import { expect } from "vitest";
import { deliverEmail } from "~/models/emails.server";
import { db } from "~/services/db.server";
import { optionalUser } from "~/services/permissions.server";

// For tests that drive the account pages (password reset, profile) through their loaders and
// actions: addresses, passwords, form posts, and the rows and e-mails they leave behind.

const run = randomUUID().slice(0, 8);
let serial = 0;
/** A fresh address for each use: the shared mail sink keeps e-mails from earlier tests and runs. */
export const address = (name: string) => `${name}.${run}.${++serial}@example.test`;

/** The password accounts are made with. */
export const PASSWORD = "correct horse battery";
/** A password that passes the rules for a new one. */
export const NEW_PASSWORD = "plum tractor lantern velvet";

/** What a route module threw or returned. */
export async function outcome(run: () => unknown): Promise<unknown> {
  try {
    return await run();
  } catch (thrown) {
    return thrown;
  }
}

/** A form post to `url`, with the session cookie when given. */
export function post(url: string, fields: Record<string, string>, cookie?: string) {
  const headers: Record<string, string> = { "Content-Type": "application/x-www-form-urlencoded" };
  if (cookie) headers.Cookie = cookie;
  return new Request(`http://127.0.0.1${url}`, { method: "POST", headers, body: new URLSearchParams(fields) });
}

/** The user a session cookie ("name=value") signs in, or null. */
export async function whoIs(cookie: string) {
  return optionalUser(new Request("http://127.0.0.1/", { headers: { Cookie: cookie } }));
}

export async function count(
  table: "email_log" | "password_resets" | "sessions" | "audit_log" | "email_changes",
  where: Record<string, unknown> = {},
): Promise<number> {
  const row = await db(table).where(where).count<{ n: number }[]>("* as n").first();
  return Number(row?.n ?? 0);
}

/** Sends every e-mail queued for `to` through SMTP now (the worker watches another database). */
export async function deliverTo(to: string): Promise<number> {
  const rows = await db("email_log").where({ to_address: to }).whereNot({ status: "sent" }).orderBy("id").select("id");
  for (const row of rows) expect(await deliverEmail(db, row.id)).toBe("sent");
  return rows.length;
}
