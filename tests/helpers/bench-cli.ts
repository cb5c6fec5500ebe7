/**
 * Runs `bench/run.ts --suite <suite> --db <db> --json --no-alerts [extra…]` in a checkout (a temporary git
 * repository in the end-to-end tests) and parses its one JSON object from stdout. A non-JSON
 * answer rejects with both streams, so a failing run explains itself in the test output.
 */
import { spawn } from "node:child_process";

export function runBenchJson<T>(cwd: string, suite: string, db: string, extra: string[] = []): Promise<{ code: number | null; json: T; stderr: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ["--import", "tsx", "bench/run.ts", "--suite", suite, "--db", db, "--json", "--no-alerts", ...extra], { cwd, stdio: ["ignore", "pipe", "pipe"] });
    let out = "";
    let err = "";
    child.stdout.on("data", (c) => (out += c));
    child.stderr.on("data", (c) => (err += c));
    child.on("error", reject);
    child.on("exit", (code) => {
      try {
        resolve({ code, json: JSON.parse(out) as T, stderr: err });
      } catch {
        reject(new Error(`bench output is not JSON (exit ${code}):\n${out}\n${err}`));
      }
    });
  });
}
