/**
 * Starts the built Arcwatch server for browser tests: builds once when build/ is missing or
 * stale (guarded by a lock directory so parallel test files do not build twice), seeds a
 * temporary database, and spawns `node scripts/serve.mjs` on a free loopback port.
 */
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { createHash } from "node:crypto";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import { buildState } from "../../scripts/build-state.mjs";

export const ROOT = path.resolve(import.meta.dirname, "..", "..");

function sleep(ms: number) {
  return new Promise((r) => setTimeout(r, ms));
}

/** Builds the app unless a fresh build exists. */
export async function ensureBuild(): Promise<void> {
  const lock = path.join(os.tmpdir(), `arcwatch-build-${createHash("sha1").update(ROOT).digest("hex").slice(0, 12)}.lock`);
  for (let waited = 0; buildState(ROOT) !== "fresh"; waited += 500) {
    try {
      fs.mkdirSync(lock);
    } catch {
      if (waited > 180_000) throw new Error(`Timed out waiting for another build (${lock}); remove it if stale.`);
      await sleep(500);
      continue;
    }
    try {
      if (buildState(ROOT) === "fresh") break;
      const r = spawnSync(process.execPath, [path.join(ROOT, "node_modules/@react-router/dev/bin.js"), "build"], {
        cwd: ROOT,
        encoding: "utf8",
        env: { ...process.env, NODE_ENV: "production" },
      });
      if (r.status !== 0) throw new Error(`react-router build failed:\n${r.stdout}\n${r.stderr}`);
    } finally {
      fs.rmSync(lock, { recursive: true, force: true });
    }
  }
}

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const addr = srv.address();
      const port = typeof addr === "object" && addr ? addr.port : 0;
      srv.close(() => resolve(port));
    });
  });
}

export interface RunningServer {
  url: string;
  dbFile: string;
  dir: string;
  child: ChildProcess;
  log: () => string;
  stop: () => Promise<void>;
}

/**
 * Migrates and seeds a fresh database (demo accounts), then starts the server on it.
 * `seedDb` may add more rows before the server starts.
 */
export async function startTestServer(options: { env?: Record<string, string>; dbTemplate?: string } = {}): Promise<RunningServer> {
  await ensureBuild();
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-browser-"));
  const dbFile = path.join(dir, "arcwatch.db");
  if (options.dbTemplate) {
    // A copy of an already seeded database (benchmarks reuse one; seeding runs the quick suite).
    fs.copyFileSync(options.dbTemplate, dbFile);
  } else {
    const seedRun = spawnSync(process.execPath, ["--import", "tsx", path.join(ROOT, "scripts/seed.ts")], {
      cwd: ROOT,
      encoding: "utf8",
      env: { ...process.env, ARCWATCH_DB: dbFile },
    });
    if (seedRun.status !== 0) throw new Error(`seeding failed:\n${seedRun.stdout}\n${seedRun.stderr}`);
  }
  const port = await freePort();
  let output = "";
  const child = spawn(process.execPath, [path.join(ROOT, "scripts/serve.mjs"), path.join(ROOT, "build/server/index.js")], {
    cwd: ROOT,
    env: {
      ...process.env,
      NODE_ENV: "production",
      HOST: "127.0.0.1",
      PORT: String(port),
      ARCWATCH_DB: dbFile,
      SESSION_SECRET: "browser-test-secret-7f3a9c0e5b2d4e6f",
      ...options.env,
    },
    stdio: ["ignore", "pipe", "pipe"],
  });
  child.stdout!.on("data", (d) => (output += d));
  child.stderr!.on("data", (d) => (output += d));
  // A server that dies mid-test says how (exit code or signal) in its log, which failing tests print.
  child.once("exit", (code, signal) => (output += `\n[test helper] server process exited: code ${code}, signal ${signal}\n`));
  const url = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 120_000; // generous: the machine running tests may be shared
  for (;;) {
    if (child.exitCode !== null) throw new Error(`server exited (${child.exitCode}):\n${output}`);
    try {
      const r = await fetch(`${url}/signin`);
      if (r.status === 200) break;
    } catch {
      /* not listening yet */
    }
    if (Date.now() > deadline) throw new Error(`server did not answer within 120 s:\n${output}`);
    await sleep(150);
  }
  return {
    url,
    dbFile,
    dir,
    child,
    log: () => output,
    stop: async () => {
      if (child.exitCode === null) {
        const exited = new Promise((r) => child.once("exit", r));
        child.kill("SIGTERM");
        await Promise.race([exited, sleep(5000)]);
        if (child.exitCode === null) child.kill("SIGKILL");
      }
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}
