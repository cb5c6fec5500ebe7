/**
 * Test helper: a CompiledProblem from expression strings, through mathjs parse and the project's
 * expression compiler (compilePointFunction), for problems written inline in tests.
 */
import { parse, type MathNode } from "mathjs";
import { compilePointFunction } from "~/engine/expr/compile";
import type { CompiledProblem } from "~/engine/problem/types";
import { interpLinear } from "~/engine/arcs/interp";
import type { Solution } from "~/engine/schemes/types";

export interface InlineProblem {
  id: string;
  constants?: Record<string, number>;
  states: { name: string; lower?: number; upper?: number }[];
  controls: { name: string; lower?: number; upper?: number }[];
  dynamics: string[];
  running?: string;
  /** Endpoint expression in t0, tf, initial(x), final(x). */
  terminal?: string;
  sense?: "min" | "max";
  initial: Record<string, number>;
  final?: Record<string, number>;
  endpoint?: { name: string; expr: string; lower: number; upper: number }[];
  path?: { name: string; expr: string; lower?: number; upper?: number }[];
  t0?: number;
  tf: number | { lower: number; upper: number; guess: number };
}

export function inlineProblem(p: InlineProblem): CompiledProblem {
  const constants = p.constants ?? {};
  const nx = p.states.length;
  const nu = p.controls.length;
  const pointInputs = ["t", ...p.states.map((s) => s.name), ...p.controls.map((c) => c.name)];
  const endInputs = ["t0", ...p.states.map((s) => `initial(${s.name})`), "tf", ...p.states.map((s) => `final(${s.name})`)];
  const dyn: MathNode[] = p.dynamics.map((e) => parse(e));
  const path: MathNode[] = (p.path ?? []).map((q) => parse(q.expr));
  const running = p.running ? parse(p.running) : null;
  const terminal = p.terminal ? parse(p.terminal) : null;
  const endpointRows: { name: string; expr: string; lower: number; upper: number }[] = [];
  for (const [k, v] of Object.entries(p.initial)) endpointRows.push({ name: `initial ${k}`, expr: `initial(${k})`, lower: v, upper: v });
  for (const [k, v] of Object.entries(p.final ?? {})) endpointRows.push({ name: `final ${k}`, expr: `final(${k})`, lower: v, upper: v });
  endpointRows.push(...(p.endpoint ?? []));
  const v = (s: { name: string; lower?: number; upper?: number }) => ({
    name: s.name, unit: "-", lower: s.lower ?? -Infinity, upper: s.upper ?? Infinity, scale: 1,
  });
  const sense = p.sense ?? "min";
  const tf = p.tf;
  return {
    id: p.id,
    versionHash: "inline",
    title: p.id,
    description: "",
    tags: [],
    nx,
    nu,
    states: p.states.map(v),
    controls: p.controls.map(v),
    constants,
    horizon: typeof tf === "number" ? { kind: "fixed", t0: p.t0 ?? 0, tf } : { kind: "free", t0: p.t0 ?? 0, ...tf },
    dynamics: compilePointFunction(dyn, pointInputs, constants),
    path: compilePointFunction(path, pointInputs, constants),
    pathInfo: (p.path ?? []).map((q) => ({ name: q.name, lower: q.lower ?? -Infinity, upper: q.upper ?? Infinity })),
    runningCost: running ? compilePointFunction([running], pointInputs, constants) : null,
    terminalCost: terminal ? compilePointFunction([terminal], endInputs, constants) : null,
    endpoint: compilePointFunction(endpointRows.map((r) => parse(r.expr)), endInputs, constants),
    endpointInfo: endpointRows.map((r) => ({ name: r.name, lower: r.lower, upper: r.upper })),
    sense,
    objectiveSign: sense === "max" ? -1 : 1,
    guess: { at: () => {}, tf: typeof tf === "number" ? tf : tf.guess },
    reference: {},
    warnings: [],
    symbolic: { pointInputs, dynamics: dyn, path, runningCost: running, terminalCost: terminal, tex: {} },
  };
}

/** A Solution sampled from functions of t on a uniform grid of n points (linear interpolation). */
export function sampled(
  t0: number,
  tf: number,
  n: number,
  x: (t: number) => number[],
  u: (t: number) => number[],
  lambda: ((t: number) => number[]) | null,
): Solution {
  const t = Float64Array.from({ length: n }, (_, k) => t0 + ((tf - t0) * k) / (n - 1));
  const cols = (f: (t: number) => number[]) => {
    const first = f(t[0]);
    return first.map((_, i) => t.map((tk) => f(tk)[i]));
  };
  const states = cols(x);
  const controls = cols(u);
  const costates = lambda ? cols(lambda) : null;
  return {
    scheme: "trapezoidal",
    t,
    states,
    tu: t,
    controls,
    tLambda: costates ? t : null,
    costates,
    pathMultipliers: null,
    t0,
    tf,
    objective: NaN,
    stateAt(tq, out) {
      for (let i = 0; i < states.length; i++) out[i] = interpLinear(t, states[i], tq);
    },
    controlAt(tq, out) {
      for (let j = 0; j < controls.length; j++) out[j] = interpLinear(t, controls[j], tq);
    },
  };
}
