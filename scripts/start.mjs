/**
 * `npm start`: build when build/ is missing or older than the sources, migrate, seed an
 * empty database, then serve on HOST (default 127.0.0.1) and PORT (default 3000) and print
 * the URL. The server runs in this process, so stopping `npm start` stops it.
 */
import { spawnSync } from "node:child_process";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { buildState } from "./build-state.mjs";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
process.chdir(root);
process.env.NODE_ENV = process.env.NODE_ENV ?? "production";

function run(label, args) {
  const started = Date.now();
  const r = spawnSync(process.execPath, args, { stdio: "inherit", env: process.env });
  if (r.status !== 0) {
    console.error(`[arcwatch] ${label} failed (exit ${r.status ?? r.signal}).`);
    process.exit(r.status ?? 1);
  }
  console.log(`[arcwatch] ${label} done in ${((Date.now() - started) / 1000).toFixed(1)} s`);
}

const serverBuild = path.join(root, "build", "server", "index.js");
const state = buildState(root);
if (state !== "fresh") {
  console.log(state === "missing" ? "[arcwatch] no build yet: building" : "[arcwatch] sources changed since the last build: rebuilding");
  run("build", [path.join(root, "node_modules", "@react-router", "dev", "bin.js"), "build"]);
}

const cli = await import("./build-cli.mjs");
if (cli.cliState(root) !== "fresh") {
  const seconds = await cli.buildCli(root);
  console.log(`[arcwatch] command line (arcwatch solve|bench|refine) built in ${seconds.toFixed(1)} s`);
}

run("database migrate + seed", ["--import", "tsx", path.join(root, "scripts", "seed.ts")]);

const { startServer } = await import("./serve.mjs");
try {
  const { server, url } = await startServer({ buildPath: serverBuild });
  console.log(`\n  Arcwatch is running at ${url}\n  Sign in with a demo account listed in README.md. Stop with Ctrl+C.\n`);
  const stop = () => server.close(() => process.exit(0));
  for (const signal of ["SIGTERM", "SIGINT"]) process.once(signal, stop);
  // `npm start` killed by a signal does not always pass it on (e.g. `timeout`, `kill <npm pid>`):
  // stop when the parent process is gone, so no server is left behind.
  const parent = process.ppid;
  setInterval(() => {
    if (process.ppid !== parent) stop();
  }, 1000).unref();
} catch (err) {
  if (err && err.code === "EADDRINUSE") {
    console.error(`[arcwatch] port ${process.env.PORT ?? 3000} is in use; set PORT to another port.`);
    process.exit(1);
  }
  throw err;
}
