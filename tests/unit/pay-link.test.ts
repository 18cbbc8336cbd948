import { describe, expect, it } from "vitest";
import { payLinkToken, verifyPayLinkToken } from "~/services/pay-link.server";

const SECRET = "test-secret-one";
const OTHER = "test-secret-two";
const NOW = new Date("2026-11-10T12:00:00Z");
const LATER = new Date("2027-01-09T12:00:00Z");

describe("pay-link tokens", () => {
  it("accepts a valid token and names its invoice and expiry", () => {
    const token = payLinkToken(42, LATER, SECRET);
    expect(token).toMatch(/^42\.\d+\.[A-Za-z0-9_-]{43}$/);
    expect(verifyPayLinkToken(token, { now: NOW, secrets: [SECRET] })).toEqual({ ok: true, invoiceId: 42, expiresAt: LATER });
  });

  it("refuses a tampered token: another invoice, a later expiry, a changed signature", () => {
    const token = payLinkToken(42, LATER, SECRET);
    const [, exp, sig] = token.split(".");
    expect(verifyPayLinkToken(`43.${exp}.${sig}`, { now: NOW, secrets: [SECRET] })).toEqual({ ok: false, reason: "bad-signature" });
    expect(verifyPayLinkToken(`42.${Number(exp) + 86400}.${sig}`, { now: NOW, secrets: [SECRET] })).toEqual({ ok: false, reason: "bad-signature" });
    const flipped = sig.slice(0, 10) + (sig[10] === "A" ? "B" : "A") + sig.slice(11);
    expect(verifyPayLinkToken(`42.${exp}.${flipped}`, { now: NOW, secrets: [SECRET] })).toEqual({ ok: false, reason: "bad-signature" });
    for (const bad of ["", "42", "42.x.y", `42.${exp}`, `042.${exp}.${sig}`, `42.${exp}.${sig}=`, `-42.${exp}.${sig}`]) {
      expect(verifyPayLinkToken(bad, { now: NOW, secrets: [SECRET] })).toEqual({ ok: false, reason: "malformed" });
    }
  });

  it("refuses an expired token, from its expiry second on", () => {
    const token = payLinkToken(42, LATER, SECRET);
    expect(verifyPayLinkToken(token, { now: new Date(LATER.getTime() - 1000), secrets: [SECRET] }).ok).toBe(true);
    expect(verifyPayLinkToken(token, { now: LATER, secrets: [SECRET] })).toEqual({ ok: false, reason: "expired" });
    expect(verifyPayLinkToken(token, { now: new Date("2028-01-01T00:00:00Z"), secrets: [SECRET] })).toEqual({ ok: false, reason: "expired" });
  });

  it("refuses a token signed with another secret, and accepts it while that secret is still listed (rotation)", () => {
    const token = payLinkToken(42, LATER, OTHER);
    expect(verifyPayLinkToken(token, { now: NOW, secrets: [SECRET] })).toEqual({ ok: false, reason: "bad-signature" });
    expect(verifyPayLinkToken(token, { now: NOW, secrets: [SECRET, OTHER] }).ok).toBe(true);
  });

  it("refuses to sign a bad invoice id", () => {
    expect(() => payLinkToken(0, LATER, SECRET)).toThrow(RangeError);
    expect(() => payLinkToken(1.5, LATER, SECRET)).toThrow(RangeError);
  });
});
