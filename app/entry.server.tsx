import { PassThrough } from "node:stream";

import type { AppLoadContext, EntryContext } from "react-router";
import { createReadableStreamFromReadable } from "@react-router/node";
import { ServerRouter } from "react-router";
import { isbot } from "isbot";
import type { RenderToPipeableStreamOptions } from "react-dom/server";
import { renderToPipeableStream } from "react-dom/server";
import { serverEnv } from "./services/env.server";
import { createNonce, securityHeaders, tileSourceForCsp } from "./services/security-headers.server";

// React Router's default Node entry, plus the security headers on every HTML page: a nonce
// per response, given to ServerRouter (which hands it to <Scripts>, <ScrollRestoration>,
// <Links> and its own inline scripts) and to React (its streaming scripts), and named in
// the Content-Security-Policy. See app/services/security-headers.server.ts for the policy.

export const streamTimeout = 5_000;

function setSecurityHeaders(headers: Headers, nonce: string) {
  const env = serverEnv();
  const values = securityHeaders({
    nonce,
    tileOrigin: tileSourceForCsp(env.MAP_TILE_URL),
    secure: env.COOKIE_SECURE === "true",
    // react-router dev (Vite, hot reload) needs a looser policy; a build never gets it.
    dev: import.meta.env.DEV,
  });
  for (const [name, value] of Object.entries(values)) headers.set(name, value);
}

export default function handleRequest(
  request: Request,
  responseStatusCode: number,
  responseHeaders: Headers,
  routerContext: EntryContext,
  _loadContext: AppLoadContext,
) {
  const nonce = createNonce();
  setSecurityHeaders(responseHeaders, nonce);

  // https://httpwg.org/specs/rfc9110.html#HEAD
  if (request.method.toUpperCase() === "HEAD") {
    return new Response(null, {
      status: responseStatusCode,
      headers: responseHeaders,
    });
  }

  return new Promise((resolve, reject) => {
    let shellRendered = false;
    const userAgent = request.headers.get("user-agent");

    // Bots and SPA mode wait for all content before the response starts.
    const readyOption: keyof RenderToPipeableStreamOptions =
      (userAgent && isbot(userAgent)) || routerContext.isSpaMode ? "onAllReady" : "onShellReady";

    // Abort the rendering stream after `streamTimeout`, leaving time to flush the rejected boundaries.
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);

    const { pipe, abort } = renderToPipeableStream(<ServerRouter context={routerContext} url={request.url} nonce={nonce} />, {
      nonce,
      [readyOption]() {
        shellRendered = true;
        const body = new PassThrough({
          final(callback) {
            // Clear the timeout so the closure is not kept alive.
            clearTimeout(timeoutId);
            timeoutId = undefined;
            callback();
          },
        });
        const stream = createReadableStreamFromReadable(body);

        responseHeaders.set("Content-Type", "text/html");

        pipe(body);

        resolve(
          new Response(stream, {
            headers: responseHeaders,
            status: responseStatusCode,
          }),
        );
      },
      onShellError(error: unknown) {
        reject(error);
      },
      onError(error: unknown) {
        responseStatusCode = 500;
        // Errors inside the shell are logged here; shell errors reject and are logged by the framework.
        if (shellRendered) {
          console.error(error);
        }
      },
    });
  });
}
