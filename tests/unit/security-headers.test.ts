import { describe, expect, it } from "vitest";
import { contentSecurityPolicy, createNonce, securityHeaders, tileSourceForCsp } from "~/services/security-headers.server";

// The policy as the browser reads it: directive name → its sources.
function directives(policy: string): Map<string, string[]> {
  return new Map(
    policy
      .split(";")
      .map((d) => d.trim().split(/\s+/))
      .filter((parts) => parts[0])
      .map(([name, ...sources]) => [name, sources]),
  );
}

const NONCE = "bm9uY2Utb2YtdGhpcy10ZXN0";

describe("the content security policy of an HTML page", () => {
  const policy = directives(contentSecurityPolicy({ nonce: NONCE, tileOrigin: null, secure: false }));

  it("runs scripts from this site and inline scripts with this response's nonce only", () => {
    expect(policy.get("script-src")).toEqual(["'self'", `'nonce-${NONCE}'`]);
  });

  it("names the directives the brief asks for, each with exactly its sources", () => {
    expect(policy.get("object-src")).toEqual(["'none'"]);
    expect(policy.get("base-uri")).toEqual(["'self'"]);
    expect(policy.get("frame-ancestors")).toEqual(["'none'"]);
    expect(policy.get("img-src")).toEqual(["'self'", "data:", "blob:"]);
    expect(policy.get("style-src")).toEqual(["'self'", "'unsafe-inline'"]);
    expect(policy.get("connect-src")).toEqual(["'self'"]);
    expect(policy.get("font-src")).toEqual(["'self'", "data:"]);
  });

  it("has no form-action, so the pay button's redirect to the checkout page is not blocked", () => {
    expect(policy.has("form-action")).toBe(false);
  });

  it("allows map tiles from the tile server's origin and nowhere else", () => {
    const withTiles = directives(contentSecurityPolicy({ nonce: NONCE, tileOrigin: "https://*.tile.example.test", secure: false }));
    expect(withTiles.get("img-src")).toEqual(["'self'", "data:", "blob:", "https://*.tile.example.test"]);
    expect(withTiles.get("connect-src")).toEqual(["'self'"]);
  });

  it("under the dev server allows Vite's inline scripts and websocket, without a nonce (which would switch 'unsafe-inline' off)", () => {
    const dev = directives(contentSecurityPolicy({ nonce: NONCE, tileOrigin: null, secure: false, dev: true }));
    expect(dev.get("script-src")).toContain("'unsafe-inline'");
    expect(dev.get("script-src")?.some((s) => s.startsWith("'nonce-"))).toBe(false);
    expect(dev.get("connect-src")).toEqual(["'self'", "ws:", "wss:"]);
    expect(dev.get("object-src")).toEqual(["'none'"]);
    expect(dev.get("frame-ancestors")).toEqual(["'none'"]);
  });
});

describe("the security headers", () => {
  it("are all there over http, without Strict-Transport-Security", () => {
    const headers = securityHeaders({ nonce: NONCE, tileOrigin: null, secure: false });
    expect(headers["X-Content-Type-Options"]).toBe("nosniff");
    expect(headers["Referrer-Policy"]).toBe("strict-origin-when-cross-origin");
    expect(headers["X-Frame-Options"]).toBe("DENY");
    expect(headers["Content-Security-Policy"]).toContain(`'nonce-${NONCE}'`);
    expect(headers).not.toHaveProperty("Strict-Transport-Security");
  });

  it("add Strict-Transport-Security for a year, subdomains included, when cookies are secure (https)", () => {
    expect(securityHeaders({ nonce: NONCE, tileOrigin: null, secure: true })["Strict-Transport-Security"]).toBe("max-age=31536000; includeSubDomains");
  });
});

describe("the nonce", () => {
  it("is 128 random bits in base64, new for each response", () => {
    const seen = new Set(Array.from({ length: 200 }, createNonce));
    expect(seen.size).toBe(200);
    for (const nonce of seen) {
      expect(nonce).toMatch(/^[A-Za-z0-9+/]{22}==$/);
      expect(Buffer.from(nonce, "base64")).toHaveLength(16);
    }
  });
});

describe("the tile server as a policy source", () => {
  it.each([
    ["https://tiles.example.test/{z}/{x}/{y}.png", "https://tiles.example.test"],
    ["https://{s}.tile.example.test/{z}/{x}/{y}.png", "https://*.tile.example.test"],
    ["HTTP://Tiles.Example.Test:8080/{z}/{x}/{y}.png?key=abc", "http://tiles.example.test:8080"],
    ["http://127.0.0.1:8081/tiles/{z}/{x}/{y}.png", "http://127.0.0.1:8081"],
  ])("%s → %s", (url, source) => {
    expect(tileSourceForCsp(url)).toBe(source);
  });

  it.each([[undefined], [null], [""], ["/tiles/{z}/{x}/{y}.png"], ["ftp://tiles.example.test/{z}.png"], ["https://tiles-{s}.example.test/{z}.png"], ["https://a b;script-src */x"]])(
    "%s → none (unset, relative or not nameable)",
    (url) => {
      expect(tileSourceForCsp(url)).toBeNull();
    },
  );
});
