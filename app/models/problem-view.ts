/**
 * What the pages need from a compiled problem, as plain data: names, bounds, TeX, trusted
 * answers with their provenance, end conditions, warnings (and, on request, the reference
 * trajectory thinned for a chart). A solver thread compiles the problem and answers with this
 * (app/services/problem-views.server.ts), so the request thread only reads what it is sent:
 * compiling (expression parsing, symbolic derivatives, code generation) can take seconds for
 * a large problem and would hold every other request meanwhile.
 *
 * Pure: no database, no file system; structured-clone safe (it crosses to a thread and back).
 */
import { compileProblemSource, type ProblemSourceFiles } from "~/engine/problem/compile";
import type { ProblemError } from "~/engine/problem/errors";
import type { CompiledProblem, Provenance } from "~/engine/problem/types";
import { nameToTex, toTex } from "~/engine/expr/tex";

export interface ProvenanceLine {
  quantity: string;
  kind: string;
  text: string;
}

export interface BoundRow {
  name: string;
  kind: "state" | "control" | "path";
  unit: string;
  lower: number | null;
  upper: number | null;
  tex?: string;
}

export interface EndConditionRow {
  kind: "initial" | "final" | "endpoint";
  name: string;
  tex: string;
  lower: number | null;
  upper: number | null;
}

/** A time series for a chart: one time grid, one column per name. */
export interface Series {
  t: number[];
  columns: Record<string, number[]>;
}

/** Points a chart series keeps at most (thinned evenly). */
export const MAX_POINTS = 400;

export function thin(t: number[], columns: Record<string, number[]>): Series {
  const n = t.length;
  if (n <= MAX_POINTS) return { t, columns };
  const step = (n - 1) / (MAX_POINTS - 1);
  const idx = Array.from({ length: MAX_POINTS }, (_, i) => Math.round(i * step));
  return { t: idx.map((i) => t[i]!), columns: Object.fromEntries(Object.entries(columns).map(([k, v]) => [k, idx.map((i) => v[i]!)])) };
}

export interface ProblemView {
  id: string;
  title: string;
  description: string;
  tags: string[];
  versionHash: string;
  sense: "min" | "max";
  horizon: CompiledProblem["horizon"];
  /** TeX per JSON path of the file ("dynamics.v", "path[0].expr", "objective.terminal", ...). */
  tex: Record<string, string>;
  stateNames: string[];
  controlNames: string[];
  constants: { name: string; value: number }[];
  bounds: BoundRow[];
  reference: {
    objective: { value: number; tolerance: number } | null;
    finalTime: { value: number; tolerance: number } | null;
    switchingTimes: number[] | null;
    arcs: string[] | null;
    trajectoryPoints: number | null;
  };
  provenance: ProvenanceLine[];
  warnings: string[];
  /**
   * Initial and final conditions and the general endpoint constraints, in the compiled order:
   * `tex` is the constrained expression (x(t_0), x(t_f) or the constraint's expression), with
   * its bounds (equal bounds: a fixed value).
   */
  endConditions: EndConditionRow[];
  /** TeX of each declared name (states, controls, constants, intermediates), as the equations print it. */
  names: Record<string, string>;
}

/** One problem to compile on a thread; `key` comes back with the answer. */
export interface ProblemViewRequest {
  key: string;
  id: string;
  files: ProblemSourceFiles;
  /** File label the errors name (e.g. "problems/x/problem.json"). */
  label: string;
  /** Also send the reference trajectory, thinned (the case and regression charts). */
  series: boolean;
}

export type ProblemViewAnswer =
  | { key: string; ok: true; view: ProblemView; series: Series | null }
  | { key: string; ok: false; errors: ProblemError[] };

function provenanceText(p: Provenance): string {
  const parts = [("citation" in p && p.citation) || "", p.detail ?? ""].filter(Boolean);
  if (p.kind === "shooting" && p.residual !== undefined) parts.push(`residual ${p.residual.toExponential(1)}`);
  return parts.join(" — ");
}

export function referenceProvenance(p: CompiledProblem): ProvenanceLine[] {
  const r = p.reference;
  const out: ProvenanceLine[] = [];
  const add = (quantity: string, prov: Provenance | undefined) => {
    if (prov) out.push({ quantity, kind: prov.kind, text: provenanceText(prov) });
  };
  add("objective", r.objective?.provenance);
  add("final time", r.finalTime?.provenance);
  add("switching times", r.switchingTimes?.provenance);
  add("trajectory", r.trajectory?.provenance);
  return out;
}

const finite = (v: number) => (Number.isFinite(v) ? v : null);

/** The page's view of a compiled problem. */
export function problemViewOf(p: CompiledProblem): ProblemView {
  const r = p.reference;
  return {
    id: p.id,
    title: p.title,
    description: p.description,
    tags: p.tags,
    versionHash: p.versionHash,
    sense: p.sense,
    horizon: p.horizon,
    tex: p.symbolic.tex,
    stateNames: p.states.map((s) => s.name),
    controlNames: p.controls.map((c) => c.name),
    constants: Object.entries(p.constants).map(([name, value]) => ({ name, value })),
    bounds: [
      ...p.states.map((s) => ({ name: s.name, kind: "state" as const, unit: s.unit, lower: finite(s.lower), upper: finite(s.upper) })),
      ...p.controls.map((c) => ({ name: c.name, kind: "control" as const, unit: c.unit, lower: finite(c.lower), upper: finite(c.upper) })),
      ...p.pathInfo.map((c, k) => ({ name: c.name, kind: "path" as const, unit: "", lower: finite(c.lower), upper: finite(c.upper), tex: p.symbolic.tex[`path[${k}].expr`] })),
    ],
    reference: {
      objective: r.objective ? { value: r.objective.value, tolerance: r.objective.tolerance } : null,
      finalTime: r.finalTime ? { value: r.finalTime.value, tolerance: r.finalTime.tolerance } : null,
      switchingTimes: r.switchingTimes?.values ?? null,
      arcs: r.arcs ?? null,
      trajectoryPoints: r.trajectory ? r.trajectory.t.length : null,
    },
    provenance: referenceProvenance(p),
    warnings: p.warnings,
    endConditions: p.endpointInfo.map((info, k): EndConditionRow => {
      const node = p.symbolic.endpoint?.[k];
      const kind = info.name.startsWith("initial(") ? "initial" : info.name.startsWith("final(") ? "final" : "endpoint";
      let tex = info.name;
      try {
        if (node) tex = toTex(node);
      } catch {
        /* keep the name */
      }
      return { kind, name: info.name, tex, lower: finite(info.lower), upper: finite(info.upper) };
    }),
    names: Object.fromEntries(
      [...p.states.map((s) => s.name), ...p.controls.map((c) => c.name), ...Object.keys(p.constants), ...Object.keys(p.symbolic.tex).filter((k) => k.startsWith("intermediates.")).map((k) => k.slice("intermediates.".length))].map((n) => [n, nameToTex(n)]),
    ),
  };
}

/** The reference trajectory of a compiled problem, thinned for a chart (null without one). */
export function referenceSeriesOf(p: CompiledProblem): Series | null {
  const tr = p.reference.trajectory;
  return tr ? thin(Array.from(tr.t), Object.fromEntries(Object.entries(tr.columns).map(([k, v]) => [k, Array.from(v)]))) : null;
}

/** Compiles one problem and answers with its view (the solver thread's side). */
export function computeProblemView(req: ProblemViewRequest): ProblemViewAnswer {
  const compiled = compileProblemSource(req.id, req.files, req.label);
  if (!compiled.ok) return { key: req.key, ok: false, errors: compiled.errors };
  return { key: req.key, ok: true, view: problemViewOf(compiled.problem), series: req.series ? referenceSeriesOf(compiled.problem) : null };
}
