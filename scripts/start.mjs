/**
 * `npm start`: build when build/ is missing or older than the sources, migrate, create the demo
 * accounts in an empty database, then serve on HOST (default 127.0.0.1) and PORT (default 3000)
 * and print the URL. On a database without runs the demo results are then seeded by a
 * background process (scripts/seed.ts --demo-only) whose progress the overview shows. The
 * server runs in this process, so stopping `npm start` stops it (and the background work).
 */
import { spawn, spawnSync } from "node:child_process";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { buildState } from "./build-state.mjs";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
process.chdir(root);
process.env.NODE_ENV = process.env.NODE_ENV ?? "production";

/** Runs a step to completion (its output shown); returns what it printed on stdout. */
function run(label, args) {
  const started = Date.now();
  const r = spawnSync(process.execPath, args, { stdio: ["inherit", "pipe", "inherit"], env: process.env, encoding: "utf8" });
  if (r.stdout) process.stdout.write(r.stdout);
  if (r.status !== 0) {
    console.error(`[arcwatch] ${label} failed (exit ${r.status ?? r.signal}).`);
    process.exit(r.status ?? 1);
  }
  console.log(`[arcwatch] ${label} done in ${((Date.now() - started) / 1000).toFixed(1)} s`);
  return r.stdout ?? "";
}

const serverBuild = path.join(root, "build", "server", "index.js");
const state = buildState(root);
if (state !== "fresh") {
  console.log(state === "missing" ? "[arcwatch] no build yet: building" : "[arcwatch] sources changed since the last build: rebuilding");
  run("build", [path.join(root, "node_modules", "@react-router", "dev", "bin.js"), "build"]);
}

// migrations and demo accounts only: the server answers as soon as these are in; the demo
// results (a real quick-suite run, about a minute or more) are seeded in the background below
const seeded = run("database migrate + accounts", ["--import", "tsx", path.join(root, "scripts", "seed.ts"), "--accounts-only"]);
const demoWanted = seeded.includes("[arcwatch] demo results: wanted");

/** Background children (demo seeding, command-line build), stopped with the server. */
const children = [];
function background(label, args) {
  const child = spawn(process.execPath, args, { stdio: ["ignore", "inherit", "inherit"], env: process.env });
  children.push(child);
  child.on("exit", (code, signal) => {
    if (code !== 0 && signal === null) console.error(`[arcwatch] ${label} ended with exit ${code}`);
  });
}

const { startServer } = await import("./serve.mjs");
try {
  const { server, url } = await startServer({ buildPath: serverBuild });
  console.log(`\n  Arcwatch is running at ${url}\n  Sign in with a demo account listed in README.md. Stop with Ctrl+C.\n`);
  if (demoWanted) {
    console.log("[arcwatch] seeding the demo results in the background (the overview shows their progress)");
    background("demo seeding", ["--import", "tsx", path.join(root, "scripts", "seed.ts"), "--demo-only"]);
  }
  // the arcwatch command line (dist/cli), when its sources changed since the last build
  const cli = await import("./build-cli.mjs");
  if (cli.cliState(root) !== "fresh") background("command-line build", [path.join(root, "scripts", "build-cli.mjs"), "--if-stale"]);
  const stop = () => {
    for (const c of children) if (c.exitCode === null) c.kill("SIGTERM");
    server.close(() => process.exit(0));
  };
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
