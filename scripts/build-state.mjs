/**
 * Whether the production build in build/ is missing or older than the sources it is made
 * from. Shared by scripts/start.mjs and the browser tests.
 */
import fs from "node:fs";
import path from "node:path";

/** Paths (relative to the project root) whose changes require a rebuild. */
export const BUILD_SOURCES = ["app", "public", "package.json", "package-lock.json", "react-router.config.ts", "vite.config.ts", "tsconfig.json"];

/** Newest modification time (ms) of `p` and everything below it; 0 when absent. */
export function newestMtime(p) {
  if (!fs.existsSync(p)) return 0;
  const st = fs.statSync(p);
  if (!st.isDirectory()) return st.mtimeMs;
  let newest = st.mtimeMs;
  for (const entry of fs.readdirSync(p)) newest = Math.max(newest, newestMtime(path.join(p, entry)));
  return newest;
}

/** "missing", "stale" or "fresh" for the build under `root`. */
export function buildState(root) {
  const serverBuild = path.join(root, "build", "server", "index.js");
  if (!fs.existsSync(serverBuild)) return "missing";
  const builtAt = fs.statSync(serverBuild).mtimeMs;
  const sourcesAt = Math.max(...BUILD_SOURCES.map((s) => newestMtime(path.join(root, s))));
  return builtAt < sourcesAt ? "stale" : "fresh";
}
