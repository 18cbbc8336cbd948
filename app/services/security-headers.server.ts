import { randomBytes } from "node:crypto";

// The headers every HTML page is sent with (app/entry.server.tsx sets them), built here as
// plain data so the policy can be read and tested on its own.

export type SecurityHeaderInput = {
  /** This response's nonce: only inline scripts carrying it run. */
  nonce: string;
  /** Where map tiles come from (a CSP source such as https://*.tile.example.test), or null. */
  tileOrigin: string | null;
  /** Served over https (COOKIE_SECURE=true): add Strict-Transport-Security. */
  secure: boolean;
  /** Vite's dev server (react-router dev): see devSources below. */
  dev?: boolean;
};

/** A fresh nonce for one response (128 random bits, base64). */
export function createNonce(): string {
  return randomBytes(16).toString("base64");
}

/**
 * The CSP source for a Leaflet tile template such as https://{s}.tile.example.test/{z}/{x}/{y}.png:
 * its origin, with a {s} subdomain placeholder as a wildcard. Null when unset, relative
 * (then 'self' covers it) or not something a policy can name.
 */
export function tileSourceForCsp(tileUrl: string | null | undefined): string | null {
  const match = /^(https?):\/\/([^/?#]+)/i.exec(tileUrl?.trim() ?? "");
  if (!match) return null;
  const scheme = match[1].toLowerCase();
  // Only a leading placeholder label ({s}.) can become a wildcard; any other one cannot be named.
  const host = match[2].toLowerCase().replace(/^\{[a-z0-9-]+\}\./, "*.");
  if (!/^(\*\.)?[a-z0-9.-]+(:\d{1,5})?$/.test(host) && !/^\[[0-9a-f:.]+\](:\d{1,5})?$/.test(host)) return null;
  return `${scheme}://${host}`;
}

/** The Content-Security-Policy value. */
export function contentSecurityPolicy({ nonce, tileOrigin, dev = false }: SecurityHeaderInput): string {
  // Under Vite's dev server the policy is loosened, or hot reload stops: its inline module
  // scripts and client code, and its websocket. A nonce would switch 'unsafe-inline' off, so
  // dev leaves it out. Built apps (react-router build) never get these.
  const scriptSrc = dev ? ["'self'", "'unsafe-inline'", "'unsafe-eval'"] : ["'self'", `'nonce-${nonce}'`];
  const connectSrc = dev ? ["'self'", "ws:", "wss:"] : ["'self'"];
  const directives: [string, string[]][] = [
    ["default-src", ["'self'"]],
    ["script-src", scriptSrc],
    // React writes style="…" attributes in the server HTML (maps, charts, colour swatches),
    // and the calendar and maps add <style> at run time: styles cannot be nonce-only.
    ["style-src", ["'self'", "'unsafe-inline'"]],
    ["img-src", ["'self'", "data:", "blob:", ...(tileOrigin ? [tileOrigin] : [])]],
    ["font-src", ["'self'", "data:"]],
    ["connect-src", connectSrc],
    ["object-src", ["'none'"]],
    ["base-uri", ["'self'"]],
    ["frame-ancestors", ["'none'"]],
    // No form-action: paying posts to this app, which redirects to the card processor's
    // checkout page, and Chrome applies form-action to the redirect too.
  ];
  return directives.map(([name, sources]) => `${name} ${sources.join(" ")}`).join("; ");
}

/** Every security header of an HTML response, by name. */
export function securityHeaders(input: SecurityHeaderInput): Record<string, string> {
  return {
    "Content-Security-Policy": contentSecurityPolicy(input),
    "X-Content-Type-Options": "nosniff",
    "Referrer-Policy": "strict-origin-when-cross-origin",
    "X-Frame-Options": "DENY",
    // Only when the app is served over https (COOKIE_SECURE=true), never on plain http.
    ...(input.secure ? { "Strict-Transport-Security": "max-age=31536000; includeSubDomains" } : {}),
  };
}
