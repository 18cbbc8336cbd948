import { createHmac, timingSafeEqual } from "node:crypto";
import { serverEnv } from "./env.server";

// Pay links: a signed, expiring token naming one invoice, so a customer can pay from the
// invoice e-mail without signing in. The token is
//
//     <invoiceId>.<expiresAt, Unix seconds>.<HMAC-SHA256, base64url>
//
// signed with the session secret (SESSION_SECRET, the first of a comma-separated list; the
// others are still accepted when verifying, so a rotated secret keeps old links working).
// The signature covers a purpose prefix, so a token made for something else never passes.
// A link only identifies the invoice; the pay page must still check the invoice's state
// (open, balance) before taking money.

export const PAY_LINK_DAYS = 60;
const PURPOSE = "varroute:pay-link:v1";
const DAY_MS = 24 * 60 * 60 * 1000;

export type PayLinkCheck =
  | { ok: true; invoiceId: number; expiresAt: Date }
  | { ok: false; reason: "malformed" | "bad-signature" | "expired" };

function signature(secret: string, invoiceId: number, expiresSeconds: number): Buffer {
  return createHmac("sha256", secret).update(`${PURPOSE}:${invoiceId}:${expiresSeconds}`).digest();
}

function secrets(): string[] {
  return serverEnv().sessionSecrets;
}

/** The default expiry: PAY_LINK_DAYS after `now`. */
export function defaultPayLinkExpiry(now = new Date()): Date {
  return new Date(now.getTime() + PAY_LINK_DAYS * DAY_MS);
}

/** A token for paying invoice `invoiceId` until `expiresAt` (whole seconds; 60 days from now by default). */
export function payLinkToken(invoiceId: number, expiresAt: Date = defaultPayLinkExpiry(), secret: string = secrets()[0]): string {
  if (!Number.isSafeInteger(invoiceId) || invoiceId <= 0) throw new RangeError(`invoiceId must be a positive whole number, got ${invoiceId}`);
  const expiresSeconds = Math.floor(expiresAt.getTime() / 1000);
  if (!Number.isSafeInteger(expiresSeconds) || expiresSeconds <= 0) throw new RangeError("expiresAt must be a valid date");
  if (!secret) throw new Error("payLinkToken: no secret to sign with");
  return `${invoiceId}.${expiresSeconds}.${signature(secret, invoiceId, expiresSeconds).toString("base64url")}`;
}

/**
 * Checks a pay-link token: well formed, signed with one of the session secrets (compared in
 * constant time), and not expired at `now`. Never throws.
 */
export function verifyPayLinkToken(token: string, options: { now?: Date; secrets?: readonly string[] } = {}): PayLinkCheck {
  if (typeof token !== "string" || token.length > 200) return { ok: false, reason: "malformed" };
  const match = /^([1-9][0-9]{0,15})\.([1-9][0-9]{0,15})\.([A-Za-z0-9_-]{43})$/.exec(token);
  if (!match) return { ok: false, reason: "malformed" };
  const invoiceId = Number(match[1]);
  const expiresSeconds = Number(match[2]);
  if (!Number.isSafeInteger(invoiceId) || !Number.isSafeInteger(expiresSeconds)) return { ok: false, reason: "malformed" };
  const given = Buffer.from(match[3], "base64url");
  if (given.length !== 32) return { ok: false, reason: "malformed" };

  let valid = false;
  for (const secret of options.secrets ?? secrets()) {
    if (!secret) continue;
    // Check every secret (no early exit), each in constant time.
    if (timingSafeEqual(given, signature(secret, invoiceId, expiresSeconds))) valid = true;
  }
  if (!valid) return { ok: false, reason: "bad-signature" };
  const expiresAt = new Date(expiresSeconds * 1000);
  if ((options.now ?? new Date()).getTime() >= expiresAt.getTime()) return { ok: false, reason: "expired" };
  return { ok: true, invoiceId, expiresAt };
}

/** The pay link of an invoice: `${APP_URL}/pay/<token>`. */
export function payLinkUrl(invoiceId: number, expiresAt?: Date): string {
  const base = serverEnv().APP_URL.replace(/\/+$/, "");
  return `${base}/pay/${payLinkToken(invoiceId, expiresAt)}`;
}
