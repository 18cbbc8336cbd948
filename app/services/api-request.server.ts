import { serverEnv } from "./env.server";

// The checks every JSON resource route (under app/routes/api/) makes before it reads a body.
// The session cookie rides along on a post from any site (sameSite lax still sends it on
// some top-level posts, and always from a same-site subdomain), so a route that writes must
// itself make sure the post came from a Varroute page:
// - Origin, when the browser sends it, must be this app's own origin. A cross-site fetch
//   always carries it; a request with none comes from a program, not another site's page.
// - The body must be application/json. A cross-site <form> or a "simple" fetch can only send
//   text/plain, url-encoded or multipart without the browser asking first (CORS preflight),
//   so insisting on application/json shuts that door even where Origin is missing.
// The Stripe webhook does not use this: its signature is its authentication.

/** A JSON answer with a status and a message, thrown out of a resource route. */
function refusal(status: number, error: string): Response {
  return Response.json({ error }, { status, headers: { "Cache-Control": "no-store" } });
}

function originOf(url: string): string | null {
  try {
    return new URL(url).origin;
  } catch {
    return null;
  }
}

/** The origins a page of this app is served from: the one the request came to, and APP_URL's (behind a proxy they differ). */
export function ownOrigins(request: Request): string[] {
  return [originOf(request.url), originOf(serverEnv().APP_URL)].filter((o): o is string => o !== null);
}

/** 403 (JSON) when the request carries an Origin that is not this app's. */
export function requireSameOrigin(request: Request): void {
  const origin = request.headers.get("Origin");
  if (origin === null) return;
  if (!ownOrigins(request).includes(origin)) {
    throw refusal(403, "This address only takes requests from Varroute's own pages, not from another site.");
  }
}

/** 415 (JSON) unless the body is declared as application/json. */
export function requireJsonContentType(request: Request): void {
  const mediaType = (request.headers.get("Content-Type") ?? "").split(";")[0].trim().toLowerCase();
  if (mediaType !== "application/json") {
    throw refusal(415, "Send the body as JSON, with the header Content-Type: application/json.");
  }
}

/**
 * The JSON body of a post from one of the app's own pages: 403 for another origin, 415 for
 * another content type, 400 when the body does not parse. Call it after the role check.
 */
export async function readJsonBody(request: Request): Promise<unknown> {
  requireSameOrigin(request);
  requireJsonContentType(request);
  try {
    return await request.json();
  } catch {
    throw refusal(400, "The body is not valid JSON.");
  }
}
