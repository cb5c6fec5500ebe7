/**
 * React Router's default Node entry, plus one start-up step: the job worker
 * (app/services/job-worker.server.ts) starts when the server build is loaded, which marks jobs
 * left running by an earlier process as died and then runs the queue. The page is rendered
 * with the request's content-security-policy nonce (app/nonce.ts), so React Router's inline
 * scripts and ours run under the policy scripts/serve.mjs sends.
 */
import { PassThrough } from "node:stream";
import type { EntryContext } from "react-router";
import { createReadableStreamFromReadable } from "@react-router/node";
import { ServerRouter } from "react-router";
import { isbot } from "isbot";
import type { RenderToPipeableStreamOptions } from "react-dom/server";
import { renderToPipeableStream } from "react-dom/server";
import { CSP_NONCE_HEADER, NonceContext } from "./nonce";
import { startJobWorker } from "./services/job-worker.server";
import { startHousekeeping } from "./services/housekeeping.server";

startJobWorker();
// Runs whose recorder died → interrupted; sharded runs past their deadline → closed incomplete.
startHousekeeping();

export const streamTimeout = 5_000;

export default function handleRequest(request: Request, responseStatusCode: number, responseHeaders: Headers, routerContext: EntryContext) {
  if (request.method.toUpperCase() === "HEAD") return new Response(null, { status: responseStatusCode, headers: responseHeaders });
  return new Promise((resolve, reject) => {
    let shellRendered = false;
    const userAgent = request.headers.get("user-agent");
    const readyOption: keyof RenderToPipeableStreamOptions = (userAgent && isbot(userAgent)) || routerContext.isSpaMode ? "onAllReady" : "onShellReady";
    let timeoutId: ReturnType<typeof setTimeout> | undefined = setTimeout(() => abort(), streamTimeout + 1000);
    // Only Arcwatch's server sets the header (overwriting any client value); elsewhere no policy is sent.
    const nonce = process.env.ARCWATCH_SERVER_SETS_ADDRESS === "1" ? (request.headers.get(CSP_NONCE_HEADER) ?? undefined) : undefined;
    const app = (
      <NonceContext.Provider value={nonce ?? ""}>
        <ServerRouter context={routerContext} url={request.url} nonce={nonce} />
      </NonceContext.Provider>
    );
    const { pipe, abort } = renderToPipeableStream(app, {
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
        const stream = createReadableStreamFromReadable(body);
        responseHeaders.set("Content-Type", "text/html");
        pipe(body);
        resolve(new Response(stream, { headers: responseHeaders, status: responseStatusCode }));
      },
      onShellError(error: unknown) {
        reject(error);
      },
      onError(error: unknown) {
        responseStatusCode = 500;
        if (shellRendered) console.error(error);
      },
    });
  });
}
