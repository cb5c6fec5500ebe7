/**
 * Arcwatch's HTTP server for the built app: the same stack as @react-router/serve
 * (express, compression, static assets, request log) plus one addition the Fetch API
 * cannot give the app: the client's address, written into the `x-arcwatch-client-address`
 * header (any value sent by the client is overwritten) for per-address sign-in throttling.
 * With ARCWATCH_TRUST_PROXY=1 the address is the last hop of X-Forwarded-For, as added by
 * the reverse proxy in front of Arcwatch, and the forwarded scheme and host are trusted.
 *
 * Usage: node scripts/serve.mjs [build/server/index.js]   (HOST, PORT from the environment)
 */
import { createRequestHandler } from "@react-router/express";
import compression from "compression";
import express from "express";
import morgan from "morgan";
import path from "node:path";
import url from "node:url";

export const CLIENT_ADDRESS_HEADER = "x-arcwatch-client-address";

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
  app.use(compression());
  app.use("/assets", express.static(path.join(clientDir, "assets"), { immutable: true, maxAge: "1y" }));
  app.use(express.static(clientDir, { maxAge: "1h" }));
  if (!options.quiet) app.use(morgan("tiny"));
  app.use((req, _res, next) => {
    req.headers[CLIENT_ADDRESS_HEADER] = clientAddressOf(req);
    next();
  });
  app.all("*", createRequestHandler({ build, mode: process.env.NODE_ENV }));

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
