/**
 * The problem loader: the only engine module that touches the file system.
 *
 * A problem is a folder `<library>/<id>/` holding problem.json and, when the file names them,
 * its trajectory CSV files (default names reference.csv and guess.csv). Compiled problems are
 * cached by content hash (problemVersionHash of the files' text), so an edited file is a new
 * version and recompiles, and an unchanged one is compiled once per process.
 */
import { existsSync, readdirSync, statSync } from "node:fs";
import path from "node:path";
import type { CompiledProblem } from "./types";
import type { ProblemError } from "./errors";
import { compileProblemSource, problemVersionHash, type CompileResult, type ProblemSourceFiles } from "./compile";
import { PROBLEM_ID_PATTERN, readProblemFiles } from "./files";
import type { ProblemLibrary } from "./library";

export { PROBLEM_ID_PATTERN, readProblemFiles };

const cache = new Map<string, CompileResult>();
/** Cache entries kept at most (oldest dropped first). */
const MAX_CACHE_ENTRIES = 500;

/** How errors name a file: relative to the working directory when inside it, with "/" separators. */
export function label(file: string): string {
  const rel = path.relative(process.cwd(), file);
  return (rel && !rel.startsWith("..") && !path.isAbsolute(rel) ? rel : file).split(path.sep).join("/");
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

/** Compiles problem `id` of a library (the first root holding it). */
export function loadFromLibrary(library: ProblemLibrary, id: string): CompileResult {
  const i = library.rootIndexOf(id);
  if (i < 0) return { ok: false, errors: [{ file: library.label, path: "", message: `no problem "${id.slice(0, 80)}" in the library (${library.label})` }] };
  return loadProblemById(id, library.roots[i]!);
}

/** Empties the compile cache (tests). */
export function clearProblemCache(): void {
  cache.clear();
}
