/**
 * Whether the module at `moduleUrl` is the script Node was started with. The command modules
 * (bench/solve.ts, bench/run.ts, bench/refine.ts) run their `main` only then: run directly
 * (`node --import tsx bench/solve.ts ...`, as the job worker and a checkout of any commit do)
 * they behave as before, while the bundled `arcwatch` command imports them and calls `main`.
 */
import fs from "node:fs";
import path from "node:path";
import { pathToFileURL } from "node:url";

export function isEntryScript(moduleUrl: string): boolean {
  const script = process.argv[1];
  if (!script) return false;
  let file = path.resolve(script);
  try {
    file = fs.realpathSync(file);
  } catch {
    /* keep the path as given */
  }
  return moduleUrl === pathToFileURL(file).href;
}
