/**
 * Progress of the demo seeding that `npm start` runs in the background on a first start
 * (scripts/demo-seed.ts, started by scripts/start.mjs after the server is up). The seeding
 * process writes a small JSON file beside the database; the overview reads it, so the first
 * visitor sees "Preparing demo data: 12 of 25 cases" instead of empty pages. A file, not a
 * table: it is written many times a second by another process, holds no data worth keeping,
 * and goes away with the database folder.
 */
import fs from "node:fs";
import { sql } from "drizzle-orm";
import { databasePath, type Db } from "~/db/client.server";
import { runs } from "~/db/schema";

/**
 * Whether a first start should seed demo results: the database holds no runs, ARCWATCH_DEMO_SEED
 * is not 0, and (inside vitest, whose test servers seed accounts only) ARCWATCH_DEMO_SEED=1.
 */
export function demoSeedWanted(db: Db): boolean {
  if (process.env.ARCWATCH_DEMO_SEED === "0") return false;
  if (process.env.VITEST && process.env.ARCWATCH_DEMO_SEED !== "1") return false;
  return (db.select({ n: sql<number>`count(*)` }).from(runs).get()?.n ?? 0) === 0;
}

export interface DemoProgress {
  /** running: the real suite run; history: writing the invented demo history; done; failed. */
  state: "running" | "history" | "done" | "failed";
  done: number;
  total: number;
  /** Process writing it (a "running" file whose process is gone is reported as stopped). */
  pid: number;
  startedAt: number;
  message: string | null;
}

export type DemoProgressView = Omit<DemoProgress, "state"> & { state: DemoProgress["state"] | "stopped" };

export function demoProgressFile(dbFile = databasePath()): string {
  return `${dbFile}.demo-progress.json`;
}

export function writeDemoProgress(p: DemoProgress, dbFile = databasePath()): void {
  if (dbFile === ":memory:") return;
  const file = demoProgressFile(dbFile);
  const tmp = `${file}.${process.pid}.tmp`;
  fs.writeFileSync(tmp, JSON.stringify(p));
  fs.renameSync(tmp, file); // readers never see half a file
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === "EPERM";
  }
}

/** The latest progress, or null when no demo seeding was started for this database. */
export function readDemoProgress(dbFile = databasePath()): DemoProgressView | null {
  if (dbFile === ":memory:") return null;
  let p: DemoProgress;
  try {
    p = JSON.parse(fs.readFileSync(demoProgressFile(dbFile), "utf8")) as DemoProgress;
  } catch {
    return null;
  }
  if ((p.state === "running" || p.state === "history") && !alive(p.pid)) return { ...p, state: "stopped" };
  return p;
}
