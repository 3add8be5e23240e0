import { Writable } from "node:stream";
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
  // Pages are rendered whole, then sent as one buffer: no page streams (none uses Suspense or Await), and a page
  // written in one piece costs less than React's many small chunks passed through a Node stream, a web stream, the
  // adapter's writes and the compression stream one by one (a CPU profile of the registry page under load spent
  // about a quarter of its time in that plumbing).
  return new Promise((resolve, reject) => {
    let ready = false;
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);
    const { pipe, abort } = renderToPipeableStream(
      <NonceContext.Provider value={nonce}>
        <ServerRouter context={routerContext} url={request.url} nonce={nonce} />
      </NonceContext.Provider>,
      {
        nonce,
        onAllReady() {
          ready = true;
          const chunks: Buffer[] = [];
          const body = new Writable({
            write(chunk: Buffer, _encoding, callback) {
              chunks.push(chunk);
              callback();
            },
            final(callback) {
              clearTimeout(timeoutId);
              timeoutId = undefined;
              responseHeaders.set("Content-Type", "text/html; charset=utf-8");
              resolve(new Response(Buffer.concat(chunks), { headers: responseHeaders, status: responseStatusCode }));
              callback();
            },
          });
          pipe(body);
        },
        onShellError(error: unknown) {
          clearTimeout(timeoutId);
          reject(error);
        },
        onError(error: unknown) {
          responseStatusCode = 500;
          // Before the page is ready the error reaches onShellError, and React Router's handleError logs it.
          if (ready) console.error(error);
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
