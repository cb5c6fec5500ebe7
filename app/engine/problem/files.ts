/**
 * Reading a problem's files from its folder: problem.json and, when the file names them, its
 * trajectory CSV files (default names reference.csv and guess.csv). No validation here: the
 * schema (./schema.ts) and the compiler (./compile.ts) do that.
 */
import { readFileSync, statSync } from "node:fs";
import path from "node:path";
import type { ProblemSourceFiles } from "./compile";

/** A problem id: a folder name of letters, digits, '-', '_' and '.', not starting with '.'. */
export const PROBLEM_ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9_.-]{0,127}$/;

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

