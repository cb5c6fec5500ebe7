/**
 * The SQLite connection (better-sqlite3) wrapped by Drizzle.
 *
 * - Path: `ARCWATCH_DB` (default `./data/arcwatch.db` under the working directory); the
 *   folder is created when missing. `:memory:` works for throwaway use.
 * - Pragmas: WAL journal (readers never block the writer), foreign keys ON (SQLite's default
 *   is OFF), busy_timeout 5000 ms (a second process waits for the write lock instead of
 *   failing at once), synchronous NORMAL (safe with WAL).
 * - `getDb()` opens the database once per process and applies pending migrations from
 *   drizzle/ on first use, so the server, the bench command line and tests share one path.
 *
 * better-sqlite3 is synchronous: run transactions as `db.transaction((tx) => { ... })`
 * with no `await` inside, or the rollback silently does not happen.
 */
import Database from "better-sqlite3";
import { drizzle, type BetterSQLite3Database } from "drizzle-orm/better-sqlite3";
import fs from "node:fs";
import path from "node:path";
import * as schema from "./schema";
import { migrateDatabase } from "./migrate.server";

export type Db = BetterSQLite3Database<typeof schema> & { $client: Database.Database };

export const DEFAULT_DB_PATH = "./data/arcwatch.db";
/** Milliseconds a connection waits for a lock held by another connection. */
export const BUSY_TIMEOUT_MS = 5000;

/** The database file this process uses: `ARCWATCH_DB` or the default, made absolute. */
export function databasePath(): string {
  const p = process.env.ARCWATCH_DB?.trim() || DEFAULT_DB_PATH;
  return p === ":memory:" ? p : path.resolve(p);
}

/**
 * Opens (and creates) a database at `file` with Arcwatch's pragmas.
 * `migrate: true` (default) applies pending migrations.
 */
export function openDatabase(file: string, options: { migrate?: boolean } = {}): Db {
  if (file !== ":memory:") fs.mkdirSync(path.dirname(file), { recursive: true });
  const sqlite = new Database(file);
  sqlite.pragma(`busy_timeout = ${BUSY_TIMEOUT_MS}`);
  if (file !== ":memory:") sqlite.pragma("journal_mode = WAL");
  sqlite.pragma("synchronous = NORMAL");
  sqlite.pragma("foreign_keys = ON");
  const db = drizzle(sqlite, { schema }) as Db;
  if (options.migrate !== false) migrateDatabase(db);
  return db;
}

interface DbCache {
  path: string;
  db: Db;
}
const globalKey = Symbol.for("arcwatch.db");
type GlobalWithDb = typeof globalThis & { [globalKey]?: DbCache };

/**
 * The process-wide connection for `databasePath()`. Kept on `globalThis` so that module
 * reloads in development do not open a second connection. If `ARCWATCH_DB` changes
 * (tests), the old connection is closed and a new one opened.
 */
export function getDb(): Db {
  const g = globalThis as GlobalWithDb;
  const file = databasePath();
  const cached = g[globalKey];
  if (cached && cached.path === file && cached.db.$client.open) return cached.db;
  if (cached?.db.$client.open) cached.db.$client.close();
  const db = openDatabase(file);
  g[globalKey] = { path: file, db };
  return db;
}

/** Closes the process-wide connection, if open (tests, graceful shutdown). */
export function closeDb(): void {
  const g = globalThis as GlobalWithDb;
  const cached = g[globalKey];
  if (cached?.db.$client.open) cached.db.$client.close();
  delete g[globalKey];
}

export { schema };
