/** Shared helpers for runner tests: temporary databases and suite files. */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll } from "vitest";
import { openDatabase, type Db } from "~/db/client.server";

export const REPO = path.resolve(__dirname, "../..");
export const SIM_EXECUTOR = path.join(REPO, "tests/runner/fixtures/sim-executor.ts");

const made: string[] = [];
// Registered when a test file imports this module: its temporary folders go after its tests.
afterAll(() => {
  for (const dir of made.splice(0)) fs.rmSync(dir, { recursive: true, force: true });
});

export function tempDir(prefix: string): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), `arcwatch-${prefix}-`));
  made.push(dir);
  return dir;
}

export function tempDb(dir: string, name = "test.db"): Db {
  return openDatabase(path.join(dir, name));
}

/** Writes a suite JSON file into dir and returns its path. */
export function writeSuite(dir: string, suite: Record<string, unknown>): string {
  const file = path.join(dir, `${suite.name as string}.json`);
  fs.writeFileSync(file, JSON.stringify({ format: "arcwatch-suite/1", ...suite }, null, 2));
  return file;
}
