#!/usr/bin/env node
/**
 * The `arcwatch` command (package.json "bin"; `npm run solve|bench|refine` call it too).
 * Runs the built command line in dist/cli/, rebuilding it first when any of its sources is
 * newer (scripts/build-cli.mjs), so it never runs stale code. When the build cannot be made
 * (esbuild absent, e.g. an install without dev dependencies) it runs the TypeScript sources
 * through tsx instead, which starts slower but gives the same results.
 */
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { buildCli, cliEntry, cliState } from "./build-cli.mjs";

const root = path.resolve(path.dirname(fs.realpathSync(fileURLToPath(import.meta.url))), "..");
let entry = cliEntry(root);
const state = cliState(root);
if (state !== "fresh") {
  process.stderr.write(`[arcwatch] ${state === "missing" ? "no built command line yet" : "sources changed since the command line was built"}: building… `);
  try {
    const seconds = await buildCli(root);
    process.stderr.write(`done in ${seconds.toFixed(1)} s\n`);
  } catch (err) {
    process.stderr.write(`failed (${err.message.split("\n")[0]}); running the sources through tsx\n`);
    const { register } = await import("tsx/esm/api");
    register({ tsconfig: path.join(root, "tsconfig.json") });
    entry = path.join(root, "bench", "cli", "arcwatch.ts");
  }
}
const { main } = await import(pathToFileURL(entry).href);
await main(process.argv.slice(2));
