/**
 * Applies the SQL migrations that drizzle-kit generated into drizzle/.
 *
 * The folder is found from `ARCWATCH_MIGRATIONS`, else `./drizzle` under the working
 * directory, else by walking up from this module (the built server lives in build/server/).
 * Two processes starting together may both see pending migrations; the loser's attempt
 * fails inside its transaction (rolled back), and we accept that when a re-check shows
 * nothing pending any more.
 */
import { migrate } from "drizzle-orm/better-sqlite3/migrator";
import type { BetterSQLite3Database } from "drizzle-orm/better-sqlite3";
import type Database from "better-sqlite3";
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";

const JOURNAL = path.join("meta", "_journal.json");

/** Absolute path of the drizzle/ migrations folder. Throws a clear error if not found. */
export function migrationsFolder(): string {
  const fromEnv = process.env.ARCWATCH_MIGRATIONS?.trim();
  if (fromEnv) return path.resolve(fromEnv);
  const candidates = [path.resolve("drizzle")];
  let dir = path.dirname(fileURLToPath(import.meta.url));
  for (let i = 0; i < 6; i++) {
    candidates.push(path.join(dir, "drizzle"));
    dir = path.dirname(dir);
  }
  for (const c of candidates) if (fs.existsSync(path.join(c, JOURNAL))) return c;
  throw new Error(`Migrations folder not found (looked for drizzle/${JOURNAL} in: ${candidates.join(", ")}); set ARCWATCH_MIGRATIONS.`);
}

/** Number of migrations in the journal that the database has not applied yet. */
export function pendingMigrations(sqlite: Database.Database, folder = migrationsFolder()): number {
  const journal = JSON.parse(fs.readFileSync(path.join(folder, JOURNAL), "utf8")) as { entries: { when: number }[] };
  const has = sqlite
    .prepare("select count(*) as n from sqlite_master where type = 'table' and name = '__drizzle_migrations'")
    .get() as { n: number };
  if (has.n === 0) return journal.entries.length;
  const last = sqlite.prepare("select max(created_at) as w from __drizzle_migrations").get() as { w: number | null };
  const lastWhen = Number(last.w ?? -1);
  return journal.entries.filter((e) => e.when > lastWhen).length;
}

export function migrateDatabase(db: BetterSQLite3Database<any> & { $client: Database.Database }): void {
  const folder = migrationsFolder();
  if (pendingMigrations(db.$client, folder) === 0) return;
  try {
    migrate(db, { migrationsFolder: folder });
  } catch (err) {
    if (pendingMigrations(db.$client, folder) === 0) return; // another process applied them
    throw err;
  }
}
