/**
 * The problem library: one ordered list of roots (the checkout's `problems/`, then the folder of
 * problems added in the browser), each root a folder of `<id>/problem.json` (+ CSV files). An id
 * resolves to the FIRST root that holds it, so a checkout problem wins over an uploaded one of the
 * same id. Suite expansion (ids and tags), the executors, the recorder (title, tags, the
 * problem.json text of a version), the reference arcs and the pages all read problems through it,
 * with the loader's own stages: files (./files.ts), schema (./schema.ts), and compilation with
 * `loadFromLibrary` (./load.ts). Listing ids and tags stops at the schema, so the runner's main
 * process never loads the expression compiler.
 */
import { existsSync, readdirSync } from "node:fs";
import path from "node:path";
import type { ProblemSourceFiles } from "./compile";
import { PROBLEM_ID_PATTERN, readProblemFiles } from "./files";
import { ProblemFileSchema, type ProblemFile } from "./schema";

function folderIds(dir: string): string[] {
  try {
    return readdirSync(dir)
      .filter((n) => !n.startsWith(".") && PROBLEM_ID_PATTERN.test(n) && existsSync(path.join(dir, n, "problem.json")))
      .sort();
  } catch {
    return [];
  }
}

/** Title, description and tags of a problem, and the exact text of its problem.json. */
export interface ProblemFacts {
  id: string;
  title: string;
  description: string;
  tags: string[];
  /** problem.json as stored (kept with each problem version). */
  json: string;
  /** Index of the root it came from (0: the checkout). */
  rootIndex: number;
}

export class ProblemLibrary {
  readonly roots: readonly string[];

  /** `roots` in order of precedence; null/empty entries and duplicates are dropped. */
  constructor(roots: readonly (string | null | undefined)[]) {
    const seen = new Set<string>();
    const out: string[] = [];
    for (const r of roots) {
      if (!r) continue;
      const abs = path.resolve(r);
      if (seen.has(abs)) continue;
      seen.add(abs);
      out.push(abs);
    }
    this.roots = out;
  }

  get label(): string {
    return this.roots.length ? this.roots.join(" + ") : "(no problem folders)";
  }

  /** Index of the first root holding `id`, or -1. */
  rootIndexOf(id: string): number {
    if (!PROBLEM_ID_PATTERN.test(id) || id.includes("..")) return -1;
    return this.roots.findIndex((r) => existsSync(path.join(r, id, "problem.json")));
  }

  /** Folder of problem `id` (first root holding it), or null. */
  dirOf(id: string): string | null {
    const i = this.rootIndexOf(id);
    return i < 0 ? null : path.join(this.roots[i]!, id);
  }

  /** Every problem id of every root, sorted (an id shadowed by an earlier root appears once). */
  ids(): string[] {
    const all = new Set<string>();
    for (const r of this.roots) for (const id of folderIds(r)) all.add(id);
    return [...all].sort();
  }

  /** The source files of problem `id` (problem.json text and its CSV files), or null. */
  files(id: string): ProblemSourceFiles | null {
    const dir = this.dirOf(id);
    return dir ? readProblemFiles(dir) : null;
  }

  /**
   * Title, description, tags and problem.json text, from the file as the loader's schema reads
   * it; a file that does not pass the schema gives the id as title and no tags (the case itself
   * records why the problem does not load).
   */
  facts(id: string): ProblemFacts | null {
    const rootIndex = this.rootIndexOf(id);
    if (rootIndex < 0) return null;
    const files = this.files(id);
    if (!files) return null;
    const f = validatedProblemFile(files.problemJson);
    if (f) return { id, title: f.title, description: f.description, tags: f.tags ?? [], json: files.problemJson, rootIndex };
    return { id, title: id, description: "", tags: [], json: files.problemJson, rootIndex };
  }

  /** Problem id → tags of every problem (a problem whose file does not validate has none). */
  tagsById(): Map<string, string[]> {
    const out = new Map<string, string[]>();
    for (const id of this.ids()) out.set(id, this.facts(id)?.tags ?? []);
    return out;
  }
}

/** A problem.json text checked by the loader's schema (./schema.ts), or null. */
export function validatedProblemFile(problemJson: string): ProblemFile | null {
  let raw: unknown;
  try {
    raw = JSON.parse(problemJson.charCodeAt(0) === 0xfeff ? problemJson.slice(1) : problemJson);
  } catch {
    return null;
  }
  const parsed = ProblemFileSchema.safeParse(raw);
  return parsed.success ? parsed.data : null;
}

/**
 * The expected arc sequence (`reference.arcs`) of a stored problem.json text, validated by the
 * loader's own schema (./schema.ts); null when the text does not validate or names no arcs.
 * Used where only the stored version is at hand (a run uploaded from another checkout).
 */
export function referenceArcsOfJson(problemJson: string): string[] | null {
  const arcs = validatedProblemFile(problemJson)?.reference?.arcs;
  return arcs?.length ? arcs : null;
}
