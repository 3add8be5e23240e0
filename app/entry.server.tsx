import { PassThrough } from "node:stream";
import { createReadableStreamFromReadable } from "@react-router/node";
import { isbot } from "isbot";
import type { RenderToPipeableStreamOptions } from "react-dom/server";
import { renderToPipeableStream } from "react-dom/server";
import { ServerRouter, type EntryContext, type HandleDataRequestFunction, type HandleErrorFunction, type RouterContextProvider } from "react-router";
import { NonceContext } from "./components/nonce";
import { isDatabaseDown } from "./.server/db/client";
import { markDatabaseSuspect } from "./.server/db/health";
import { startHousekeeping } from "./.server/housekeeping";
import { applySecurityHeaders, createNonce } from "./.server/security-headers";

export const streamTimeout = 5_000;

// The server module loads once when the app starts: sweep what a killed upload left (in the background).
startHousekeeping();

export default function handleRequest(
  request: Request,
  responseStatusCode: number,
  responseHeaders: Headers,
  routerContext: EntryContext,
  _loadContext: RouterContextProvider,
) {
  const nonce = createNonce();
  applySecurityHeaders(responseHeaders, nonce);
  if (request.method.toUpperCase() === "HEAD") {
    return new Response(null, { status: responseStatusCode, headers: responseHeaders });
  }
  return new Promise((resolve, reject) => {
    let shellRendered = false;
    const userAgent = request.headers.get("user-agent");
    const readyOption: keyof RenderToPipeableStreamOptions =
      (userAgent && isbot(userAgent)) || routerContext.isSpaMode ? "onAllReady" : "onShellReady";
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);
    const { pipe, abort } = renderToPipeableStream(
      <NonceContext.Provider value={nonce}>
        <ServerRouter context={routerContext} url={request.url} nonce={nonce} />
      </NonceContext.Provider>,
      {
        nonce,
        [readyOption]() {
          shellRendered = true;
          const body = new PassThrough({
            final(callback) {
              clearTimeout(timeoutId);
              timeoutId = undefined;
              callback();
            },
          });
          responseHeaders.set("Content-Type", "text/html; charset=utf-8");
          pipe(body);
          resolve(new Response(createReadableStreamFromReadable(body), { headers: responseHeaders, status: responseStatusCode }));
        },
        onShellError(error: unknown) {
          reject(error);
        },
        onError(error: unknown) {
          responseStatusCode = 500;
          if (shellRendered) console.error(error);
        },
      },
    );
  });
}

export const handleDataRequest: HandleDataRequestFunction = (response) => {
  applySecurityHeaders(response.headers);
  return response;
};

export const handleError: HandleErrorFunction = (error, { request }) => {
  if (request.signal.aborted) return;
  // A lost connection makes the next page ask the database again instead of trusting the last answer.
  if (isDatabaseDown(error)) markDatabaseSuspect();
  console.error(error);
};
