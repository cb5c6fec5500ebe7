/**
 * Where problems live, decided once: the checkout's `problems/` folder, then the folder of problems
 * added in the browser (ARCWATCH_UPLOADED_PROBLEMS, default `problems/` beside the database file).
 * The web pages, the problem writes, the command-line runner, the job worker and detection all
 * take their library from here (see DEVELOPERS.md, Decisions, "Uploaded problems").
 */
import os from "node:os";
import path from "node:path";
import { databasePath, type Db } from "~/db/client.server";
import { ProblemLibrary } from "~/engine/problem/library";

/** The checkout's problem folder of the running server (ARCWATCH_PROBLEMS, default ./problems). */
export function libraryProblemsDir(): string {
  return path.resolve(process.env.ARCWATCH_PROBLEMS ?? "problems");
}

/**
 * The uploaded-problems folder for a database file: ARCWATCH_UPLOADED_PROBLEMS when set, else
 * `problems/` beside the file. An in-memory database has no folder beside it; it gets one per
 * process under the system's temporary folder (nothing else can open that database anyway).
 */
export function uploadedProblemsDir(dbFile: string = databasePath()): string {
  if (process.env.ARCWATCH_UPLOADED_PROBLEMS) return path.resolve(process.env.ARCWATCH_UPLOADED_PROBLEMS);
  if (!dbFile || dbFile === ":memory:") return path.join(os.tmpdir(), `arcwatch-memory-${process.pid}`, "problems");
  return path.join(path.dirname(path.resolve(dbFile)), "problems");
}

/** The database file behind a connection (":memory:" for an in-memory one). */
export function databaseFileOf(db: Db): string {
  return db.$client.name || ":memory:";
}

/**
 * The library a run on the checkout `root` sees with this database: `<root>/problems`, then the
 * database's uploaded folder.
 */
export function problemLibraryFor(db: Db, root: string): ProblemLibrary {
  return new ProblemLibrary([path.join(path.resolve(root), "problems"), uploadedProblemsDir(databaseFileOf(db))]);
}

/** The library the web pages show: the server's checkout problems, then the uploaded folder. */
export function webProblemLibrary(): ProblemLibrary {
  return new ProblemLibrary([libraryProblemsDir(), uploadedProblemsDir()]);
}
