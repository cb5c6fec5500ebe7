/**
 * `npm start`: build when build/ is missing or older than the sources, migrate, seed an
 * empty database, then serve on HOST (default 127.0.0.1) and PORT (default 3000) and print
 * the URL. The server runs in this process, so stopping `npm start` stops it.
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
process.chdir(root);
process.env.NODE_ENV = process.env.NODE_ENV ?? "production";

const SOURCES = ["app", "public", "package.json", "package-lock.json", "react-router.config.ts", "vite.config.ts", "tsconfig.json"];

/** Newest modification time (ms) below `p`. */
function newestMtime(p) {
  if (!fs.existsSync(p)) return 0;
  const st = fs.statSync(p);
  if (!st.isDirectory()) return st.mtimeMs;
  let newest = st.mtimeMs;
  for (const entry of fs.readdirSync(p)) newest = Math.max(newest, newestMtime(path.join(p, entry)));
  return newest;
}

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
const builtAt = fs.existsSync(serverBuild) ? fs.statSync(serverBuild).mtimeMs : 0;
const sourcesAt = Math.max(...SOURCES.map((s) => newestMtime(path.join(root, s))));
if (builtAt === 0 || builtAt < sourcesAt) {
  console.log(builtAt === 0 ? "[arcwatch] no build yet: building" : "[arcwatch] sources changed since the last build: rebuilding");
  run("build", [path.join(root, "node_modules", "@react-router", "dev", "bin.js"), "build"]);
}

run("database migrate + seed", ["--import", "tsx", path.join(root, "scripts", "seed.ts")]);

const { startServer } = await import("./serve.mjs");
try {
  const { server, url } = await startServer({ buildPath: serverBuild });
  console.log(`\n  Arcwatch is running at ${url}\n  Sign in with a demo account listed in README.md. Stop with Ctrl+C.\n`);
  for (const signal of ["SIGTERM", "SIGINT"]) process.once(signal, () => server.close(() => process.exit(0)));
} catch (err) {
  if (err && err.code === "EADDRINUSE") {
    console.error(`[arcwatch] port ${process.env.PORT ?? 3000} is in use; set PORT to another port.`);
    process.exit(1);
  }
  throw err;
}
