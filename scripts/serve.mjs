/**
 * Arcwatch's HTTP server for the built app: the same stack as @react-router/serve
 * (express, compression, static assets, request log) plus what the Fetch API cannot give the
 * app, done before any route code runs:
 *
 * - Client address: written into the `x-arcwatch-client-address` header (any value sent by
 *   the client is overwritten) for per-address sign-in throttling. With ARCWATCH_TRUST_PROXY=1
 *   the address is the last hop of X-Forwarded-For, as added by the reverse proxy in front of
 *   Arcwatch, and the forwarded scheme and host are trusted.
 * - Standard security headers through helmet: a content security policy whose scripts need
 *   this response's nonce (handed to the app in `x-arcwatch-csp-nonce`, overwritten likewise),
 *   frame-ancestors 'none', nosniff, Referrer-Policy same-origin, and helmet's other defaults.
 * - Request bodies bounded before they are read (./body-limits.mjs): a caller without any
 *   credential is refused on the API, a declared length over the route's cap gets 413 at
 *   once, an upload without a length gets 413, and a body without a length elsewhere is
 *   counted while it streams and cut off at the cap with 413.
 *
 * Usage: node scripts/serve.mjs [build/server/index.js]   (HOST, PORT from the environment)
 */
import { randomBytes } from "node:crypto";
import { createReadableStreamFromReadable, writeReadableStreamToWritable } from "@react-router/node";
import compression from "compression";
import express from "express";
import helmet from "helmet";
import morgan from "morgan";
import path from "node:path";
import url from "node:url";
import { createRequestHandler } from "react-router";
import { bodyPolicy, BodyTooLarge, limitedReadable } from "./body-limits.mjs";

export const CLIENT_ADDRESS_HEADER = "x-arcwatch-client-address";
export const CSP_NONCE_HEADER = "x-arcwatch-csp-nonce";

function clientAddressOf(req) {
  if (process.env.ARCWATCH_TRUST_PROXY === "1") {
    const hops = String(req.headers["x-forwarded-for"] ?? "")
      .split(",")
      .map((s) => s.trim())
      .filter(Boolean);
    if (hops.length > 0) return hops[hops.length - 1];
  }
  return req.socket.remoteAddress ?? "unknown";
}

/** helmet with Arcwatch's policy; `res.locals.cspNonce` must be set before it runs. */
function securityHeaders() {
  return helmet({
    contentSecurityPolicy: {
      useDefaults: true,
      directives: {
        defaultSrc: ["'self'"],
        scriptSrc: ["'self'", (_req, res) => `'nonce-${res.locals.cspNonce}'`],
        // React and the chart library set style attributes; no script can run from a style.
        styleSrc: ["'self'", "'unsafe-inline'"],
        imgSrc: ["'self'", "data:"],
        fontSrc: ["'self'", "data:"],
        connectSrc: ["'self'"],
        objectSrc: ["'none'"],
        baseUri: ["'self'"],
        formAction: ["'self'"],
        frameAncestors: ["'none'"],
        // Plain-http deployments (ARCWATCH_INSECURE_COOKIE=1) must keep loading their assets.
        upgradeInsecureRequests: null,
      },
    },
    referrerPolicy: { policy: "same-origin" },
    // frame-ancestors above is the standard; X-Frame-Options for older browsers.
    xFrameOptions: { action: "deny" },
  });
}

/** Grace period for a refused client to read its answer before the connection is cut (ms). */
const REFUSE_GRACE_MS = 1000;
/** At most this much of a refused body is read (and discarded) during the grace period. */
const REFUSE_DRAIN_BYTES = 1024 * 1024;

/**
 * Sends a small plain-text or JSON refusal without reading the body into memory (no
 * `Connection: close`: Node then closes the socket as soon as the answer is out, and the
 * client's next write resets it before it has read the answer). What the client still sends is discarded, up to REFUSE_DRAIN_BYTES (then
 * reading pauses), for REFUSE_GRACE_MS (so it can read the answer: closing a socket with unread
 * data resets it), then the connection is cut. Bounded by bytes as well as time: on loopback a
 * client that keeps writing pushed 40 MB through a 1 s grace period.
 */
function refuse(req, res, status, message) {
  if (req.path.startsWith("/api/")) res.status(status).json({ error: message });
  else res.status(status).type("text/plain").send(message);
  res.once("finish", () => {
    req.unpipe();
    let drained = 0;
    const cut = () => {
      if (!req.complete) req.socket?.destroy();
    };
    req.on("data", (chunk) => {
      drained += chunk.length;
      // Stop reading (TCP backpressure holds the client) rather than cut at once: a reset now
      // could drop the answer from the client's receive buffer before it reads it.
      if (drained > REFUSE_DRAIN_BYTES) req.pause();
    });
    req.resume();
    setTimeout(cut, REFUSE_GRACE_MS).unref();
  });
}

/** React Router's request handler with the body counted against the route's cap. */
function appHandler(build, mode) {
  const handleRequest = createRequestHandler(build, mode);
  return async (req, res, next) => {
    try {
      const policy = bodyPolicy(req.method, req.path);
      const state = { tooLarge: false };
      const controller = new AbortController();
      let active = controller;
      res.on("finish", () => (active = null));
      res.on("close", () => active?.abort());
      const [, hostPortStr] = req.get("host")?.split(":") ?? [];
      const [, fwdPortStr] = req.app.enabled("trust proxy") ? (req.get("X-Forwarded-Host")?.split(":") ?? []) : [];
      const port = Number.parseInt(fwdPortStr ?? hostPortStr, 10);
      const hostname = req.hostname.split(/[\\/?#@]/)[0] || "localhost";
      const href = new URL(`${req.protocol}://${hostname}${Number.isSafeInteger(port) ? `:${port}` : ""}${req.originalUrl}`).href;
      const headers = new Headers();
      for (const [key, values] of Object.entries(req.headers)) {
        if (Array.isArray(values)) for (const v of values) headers.append(key, v);
        else if (values) headers.set(key, values);
      }
      const init = { method: req.method, headers, signal: controller.signal };
      if (req.method !== "GET" && req.method !== "HEAD") {
        init.body = createReadableStreamFromReadable(limitedReadable(req, policy.limit, () => (state.tooLarge = true)));
        init.duplex = "half";
      }
      const response = await handleRequest(new Request(href, init));
      if (state.tooLarge) {
        await response.body?.cancel().catch(() => {});
        return refuse(req, res, 413, `The request body is larger than ${policy.limit} bytes, the limit for ${policy.label}.`);
      }
      if (res.destroyed || res.writableEnded) return void (await response.body?.cancel());
      res.statusMessage = response.statusText;
      res.status(response.status);
      for (const [key, value] of response.headers.entries()) res.append(key, value);
      if (response.body) {
        try {
          await writeReadableStreamToWritable(response.body, res);
        } catch (err) {
          if (!(res.destroyed || res.writableEnded)) throw err;
        }
      } else res.end();
    } catch (err) {
      if (err instanceof BodyTooLarge && !res.headersSent) return refuse(req, res, 413, err.message);
      next(err);
    }
  };
}

/**
 * Starts the server; resolves with { server, url } once listening.
 * @param {{ buildPath?: string, host?: string, port?: number, quiet?: boolean }} options
 */
export async function startServer(options = {}) {
  process.env.NODE_ENV = process.env.NODE_ENV ?? "production";
  process.env.ARCWATCH_SERVER_SETS_ADDRESS = "1";
  const buildPath = path.resolve(options.buildPath ?? "build/server/index.js");
  const host = options.host ?? process.env.HOST ?? "127.0.0.1";
  const port = options.port ?? Number(process.env.PORT ?? 3000);
  const build = await import(url.pathToFileURL(buildPath).href);
  const clientDir = path.join(path.dirname(buildPath), "..", "client");

  const app = express();
  app.disable("x-powered-by");
  // Behind a reverse proxy: take scheme and host from X-Forwarded-Proto / X-Forwarded-Host,
  // so the request URL (and with it the same-origin check) is the public one.
  if (process.env.ARCWATCH_TRUST_PROXY === "1") app.set("trust proxy", true);
  app.use((req, res, next) => {
    res.locals.cspNonce = randomBytes(16).toString("base64");
    req.headers[CSP_NONCE_HEADER] = res.locals.cspNonce;
    req.headers[CLIENT_ADDRESS_HEADER] = clientAddressOf(req);
    next();
  });
  app.use(securityHeaders());
  app.use(compression());
  app.use("/assets", express.static(path.join(clientDir, "assets"), { immutable: true, maxAge: "1y" }));
  app.use(express.static(clientDir, { maxAge: "1h" }));
  if (!options.quiet) app.use(morgan("tiny"));
  // Bodies: refuse by caller and declared size before anything reads them.
  app.use((req, res, next) => {
    const policy = bodyPolicy(req.method, req.path);
    if (!policy.hasBody) return next();
    const verdict = policy.check(req.headers);
    if (!verdict.ok) return refuse(req, res, verdict.status, verdict.message);
    next();
  });
  app.all("*", appHandler(build, process.env.NODE_ENV));

  return await new Promise((resolve, reject) => {
    const server = app.listen(port, host);
    server.once("error", reject);
    server.once("listening", () => {
      const addr = server.address();
      const shownHost = host.includes(":") ? `[${host}]` : host;
      resolve({ server, url: `http://${shownHost}:${typeof addr === "object" && addr ? addr.port : port}` });
    });
  });
}

const isMain = process.argv[1] && path.resolve(process.argv[1]) === url.fileURLToPath(import.meta.url);
if (isMain) {
  const { server, url: address } = await startServer({ buildPath: process.argv[2] });
  console.log(`[arcwatch] serving on ${address}`);
  for (const signal of ["SIGTERM", "SIGINT"]) process.once(signal, () => server.close(() => process.exit(0)));
}
