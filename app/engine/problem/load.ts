/**
 * The problem loader: the only engine module that touches the file system.
 *
 * A problem is a folder `<library>/<id>/` holding problem.json and, when the file names them,
 * its trajectory CSV files (default names reference.csv and guess.csv). Compiled problems are
 * cached by content hash (problemVersionHash of the files' text), so an edited file is a new
 * version and recompiles, and an unchanged one is compiled once per process.
 */
import { existsSync, readdirSync, readFileSync, statSync } from "node:fs";
import path from "node:path";
import type { CompiledProblem } from "./types";
import type { ProblemError } from "./errors";
import { compileProblemSource, problemVersionHash, type CompileResult, type ProblemSourceFiles } from "./compile";

const cache = new Map<string, CompileResult>();
/** Cache entries kept at most (oldest dropped first). */
const MAX_CACHE_ENTRIES = 500;

function label(file: string): string {
  const rel = path.relative(process.cwd(), file);
  return (rel && !rel.startsWith("..") && !path.isAbsolute(rel) ? rel : file).split(path.sep).join("/");
}

/** File names a problem.json refers to (without validating it; compile does that). */
function referencedFiles(json: string): { reference?: string; guess?: string } {
  try {
    const raw = JSON.parse(json.charCodeAt(0) === 0xfeff ? json.slice(1) : json) as {
      reference?: { trajectory?: { file?: unknown } };
      guess?: { kind?: unknown; file?: unknown };
    };
    const safe = (f: unknown) => (typeof f === "string" && /^[A-Za-z0-9_-][A-Za-z0-9_.-]*\.csv$/.test(f) ? f : undefined);
    return {
      reference: safe(raw?.reference?.trajectory?.file),
      guess: raw?.guess?.kind === "trajectory" ? safe(raw.guess.file) : undefined,
    };
  } catch {
    return {};
  }
}

function readIfFile(file: string): string | undefined {
  try {
    return statSync(file).isFile() ? readFileSync(file, "utf8") : undefined;
  } catch {
    return undefined;
  }
}

/** Reads a problem's files from its folder. */
export function readProblemFiles(dir: string): ProblemSourceFiles | null {
  const problemJson = readIfFile(path.join(dir, "problem.json"));
  if (problemJson === undefined) return null;
  const names = referencedFiles(problemJson);
  const files: ProblemSourceFiles = { problemJson };
  const ref = readIfFile(path.join(dir, names.reference ?? "reference.csv"));
  if (ref !== undefined) files.referenceCsv = ref;
  const guess = readIfFile(path.join(dir, names.guess ?? "guess.csv"));
  if (guess !== undefined) files.guessCsv = guess;
  return files;
}

function compileCached(id: string, files: ProblemSourceFiles, fileLabel: string): CompileResult {
  const key = `${id}\n${fileLabel}\n${problemVersionHash(files)}`;
  const hit = cache.get(key);
  if (hit) return hit;
  const result = compileProblemSource(id, files, fileLabel);
  if (cache.size >= MAX_CACHE_ENTRIES) cache.delete(cache.keys().next().value as string);
  cache.set(key, result);
  return result;
}

/**
 * Loads one problem: `pathOrId` is a folder, a path to a problem.json, or a problem id looked up
 * in `libraryDir` (default "problems", relative to the working directory). Paths are trusted:
 * for an id from outside use loadProblemById.
 */
export function loadProblem(pathOrId: string, libraryDir = "problems"): CompileResult {
  let dir: string;
  if (pathOrId.endsWith(".json")) dir = path.dirname(pathOrId);
  else if (existsSync(pathOrId) && statSync(pathOrId).isDirectory()) dir = pathOrId;
  else dir = path.join(libraryDir, pathOrId);
  const id = path.basename(path.resolve(dir));
  const jsonFile = path.join(dir, "problem.json");
  const files = readProblemFiles(dir);
  if (!files) {
    return { ok: false, errors: [{ file: label(jsonFile), path: "", message: `no problem.json found for '${pathOrId}'` }] };
  }
  return compileCached(id, files, label(jsonFile));
}

/** A problem id: a folder name of letters, digits, '-', '_' and '.', not starting with '.'. */
export const PROBLEM_ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9_.-]{0,127}$/;

/**
 * Loads a problem by id only (never a path): for ids that come from outside (a URL, a form),
 * so that "../x" cannot reach outside the library.
 */
export function loadProblemById(id: string, libraryDir = "problems"): CompileResult {
  if (!PROBLEM_ID_PATTERN.test(id) || id.includes("..")) {
    return { ok: false, errors: [{ file: label(libraryDir), path: "", message: `'${id.slice(0, 60)}' is not a problem id` }] };
  }
  return loadProblem(path.join(libraryDir, id), libraryDir);
}

/** Loads every problem folder of the library (sorted by id); folders without problem.json are errors. */
export function loadLibrary(libraryDir = "problems"): { problems: CompiledProblem[]; errors: ProblemError[] } {
  const problems: CompiledProblem[] = [];
  const errors: ProblemError[] = [];
  let entries: string[];
  try {
    entries = readdirSync(libraryDir).sort();
  } catch {
    return { problems, errors: [{ file: label(libraryDir), path: "", message: "problem library folder not found" }] };
  }
  for (const name of entries) {
    if (name.startsWith(".")) continue;
    const dir = path.join(libraryDir, name);
    if (!statSync(dir).isDirectory()) continue;
    if (!existsSync(path.join(dir, "problem.json"))) {
      errors.push({ file: label(dir), path: "", message: "folder has no problem.json" });
      continue;
    }
    const r = loadProblem(dir, libraryDir);
    if (r.ok) problems.push(r.problem);
    else errors.push(...r.errors);
  }
  return { problems, errors };
}

/** Empties the compile cache (tests). */
export function clearProblemCache(): void {
  cache.clear();
}
