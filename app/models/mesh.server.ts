/**
 * Mesh error estimates and refinement records of stored cases (case_results.mesh_* columns),
 * read for the case page. The stored JSON is checked field by field: a row written by an older
 * runner, or by a solver under test that reports no estimate, gives null parts, never a crash.
 */
import { eq } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults } from "~/db/schema";

export interface CaseMeshPass {
  pass: number;
  intervals: number;
  points: number;
  status: string;
  iterations: number;
  seconds: number;
  maxEstimate: number | null;
}

export interface CaseMesh {
  /** "residual-quadrature" (Betts 2010 §4.7.2) or "lgr-integration" (Patterson, Hager and Rao 2015). */
  method: string | null;
  /** Breakpoints in time (N + 1) and the estimate per interval (N); null when none was stored. */
  t: number[] | null;
  error: number[] | null;
  max: number | null;
  /** Adaptive refinement; all null for a uniform mesh. */
  tolerance: number | null;
  met: boolean | null;
  passes: CaseMeshPass[] | null;
  points: number | null;
}

const num = (v: unknown): number | null => (typeof v === "number" && Number.isFinite(v) ? v : null);
const numArray = (v: unknown): number[] | null => (Array.isArray(v) && v.every((x) => typeof x === "number") ? (v as number[]) : null);

/**
 * Parses the stored estimate { method, t, error }; null unless t has one more entry than error.
 * An interval whose estimate was not finite is stored as null and read as Infinity.
 */
export function parseMeshEstimate(v: unknown): { method: string; t: number[]; error: number[] } | null {
  if (!v || typeof v !== "object") return null;
  const o = v as Record<string, unknown>;
  const t = numArray(o.t);
  const error = Array.isArray(o.error) && o.error.every((x) => x === null || typeof x === "number") ? (o.error as (number | null)[]).map((x) => (x === null ? Infinity : x)) : null;
  if (!t || !error || t.length !== error.length + 1 || error.length === 0) return null;
  return { method: typeof o.method === "string" ? o.method : "unknown", t, error };
}

export function parsePasses(v: unknown): CaseMeshPass[] | null {
  if (!Array.isArray(v)) return null;
  const out: CaseMeshPass[] = [];
  for (const p of v) {
    if (!p || typeof p !== "object") return null;
    const o = p as Record<string, unknown>;
    const pass = num(o.pass), intervals = num(o.intervals), points = num(o.points), iterations = num(o.iterations), seconds = num(o.seconds);
    if (pass === null || intervals === null || points === null || iterations === null || seconds === null || typeof o.status !== "string") return null;
    out.push({ pass, intervals, points, status: o.status, iterations, seconds, maxEstimate: num(o.maxEstimate) });
  }
  return out;
}

export function getCaseMesh(db: Db, id: number): CaseMesh | null {
  const row = db
    .select({
      json: caseResults.meshErrorJson, max: caseResults.meshErrorMax, tolerance: caseResults.meshTolerance,
      met: caseResults.meshToleranceMet, points: caseResults.meshPoints, refinement: caseResults.refinementJson,
    })
    .from(caseResults)
    .where(eq(caseResults.id, id))
    .get();
  if (!row) return null;
  const est = parseMeshEstimate(row.json);
  return {
    method: est?.method ?? null,
    t: est?.t ?? null,
    error: est?.error ?? null,
    max: row.max,
    tolerance: row.tolerance,
    met: row.met,
    passes: parsePasses(row.refinement),
    points: row.points,
  };
}
