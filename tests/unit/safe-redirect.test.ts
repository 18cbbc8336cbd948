import { describe, expect, it } from "vitest";
import { safeRedirectPath } from "~/services/permissions.server";

const FALLBACK = "/portal";

describe("safeRedirectPath", () => {
  // Browsers drop tabs and newlines inside a URL and read "\" as "/", so "/<tab>/evil.example"
  // leaves the site; a CR or NUL in a Location header is a 500 or a header of the attacker's.
  // A path with either, or with whitespace, is refused rather than cleaned.
  it.each([
    ["/%09/evil.example as the page receives it (decoded: a tab)", "/\t/evil.example"],
    ["/%09/evil.example still encoded", "/%09/evil.example"],
    ["an encoded newline after the first slash", "/%0a/evil.example"],
    ["an encoded backslash after the first slash", "/%5c/evil.example"],
    ["an encoded second slash", "/%2F/evil.example"],
    ["a protocol-relative address", "//evil.example"],
    ["a protocol-relative address with a path", "//evil.example/portal"],
    ["a slash and a backslash", "/\\evil.example"],
    ["a backslash and a slash", "\\/evil.example"],
    ["a backslash further on", "/portal\\..\\..\\evil"],
    ["a tab at the end", "/portal\t"],
    ["a newline before the second slash", "/\n/evil.example"],
    ["a carriage return and newline", "/\r\n/evil.example"],
    ["a NUL", "/\u0000/evil.example"],
    ["a NUL at the end", "/portal\u0000"],
    ["a header injection", "/x\r\nSet-Cookie: a=b"],
    ["a header injection in the query", "/portal?x=1\r\nSet-Cookie:"],
    ["an encoded header injection", "/x%0d%0aSet-Cookie:%20a=b"],
    ["an absolute address", "https://evil.example"],
    ["an absolute address without slashes", "https:evil.example"],
    ["a javascript: address", "javascript:alert(1)"],
    ["a leading space", " /portal"],
    ["a trailing space", "/portal "],
    ["a space inside", "/por tal"],
    ["a non-breaking space", "/portal\u00a0"],
    ["a line separator", "/\u2028/evil.example"],
    ["a DEL", "/\u007f/evil.example"],
    ["a C1 control", "/\u0085/evil.example"],
    ["a relative path", "portal"],
    ["a dot path", "./portal"],
    ["a query alone", "?x=1"],
    ["empty", ""],
    ["far too long", `/${"a".repeat(5000)}`],
  ])("refuses %s", (_name, hostile) => {
    expect(safeRedirectPath(hostile, FALLBACK)).toBe(FALLBACK);
  });

  it("falls back when there is nothing", () => {
    expect(safeRedirectPath(null, FALLBACK)).toBe(FALLBACK);
    expect(safeRedirectPath(undefined, FALLBACK)).toBe(FALLBACK);
  });

  it.each([
    "/",
    "/portal",
    "/portal/invoices",
    "/portal/invoices?year=2026",
    "/dispatch/days/2027-03-14?view=map&crew=2",
    "/portal/bookings?booked=2027-04-02#latest",
    "/portal/season?q=Robin%20Hive",
    "/portal/search?next=%2Fportal%2Finvoices",
    "/office/invoices/12/pdf",
    "/portal/yards/caf%C3%A9",
    "/portal/yards/café",
  ])("keeps the same-site path %s", (path) => {
    expect(safeRedirectPath(path, FALLBACK)).toBe(path);
  });
});
