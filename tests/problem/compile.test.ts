/**
 * compileProblemSource / loadProblem on valid files: input layouts, endpoint rows, guesses,
 * references, TeX, version hashes and the cache. Values are checked against the same model
 * written by hand below (the Plover-1 fixture's equations typed in again as TypeScript).
 */
import { mkdtempSync, readFileSync, writeFileSync, mkdirSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import katex from "katex";
import { compileProblemSource, problemVersionHash } from "~/engine/problem/compile";
import { loadProblem, loadProblemById } from "~/engine/problem/load";
import { formatProblemError } from "~/engine/problem/errors";
import type { CompiledProblem } from "~/engine/problem/types";

const PLOVER = "tests/fixtures/problems/plover-ascent";

function mustLoad(p: string): CompiledProblem {
  const r = loadProblem(p);
  if (!r.ok) throw new Error(r.errors.map(formatProblemError).join("\n"));
  return r.problem;
}

/** The Plover-1 equations by hand: ḣ = v, v̇ = (T − D)/m − g0, ṁ = −T/(Isp g0), D = ½ρ0 e^(−h/H) v² CdA tanh(v/10). */
function ploverByHand(h: number, v: number, m: number, T: number): number[] {
  const g0 = 9.80665, rho0 = 1.225, H = 7200, CdA = 0.042, c = 215 * 9.80665;
  const D = 0.5 * rho0 * Math.exp(-h / H) * v * v * CdA * Math.tanh(v / 10);
  return [v, (T - D) / m - g0, -T / c];
}

describe("compiled problem layout", () => {
  const p = mustLoad(PLOVER);

  it("point functions take z = [t, x..., u...] and match the hand-written model", () => {
    expect(p.symbolic.pointInputs).toEqual(["t", "h", "v", "m", "T"]);
    expect([p.nx, p.nu, p.dynamics.nIn, p.dynamics.nOut]).toEqual([3, 1, 5, 3]);
    const out = new Float64Array(3);
    p.dynamics.eval(Float64Array.of(3, 1500, 220, 150, 5000), out);
    const ref = ploverByHand(1500, 220, 150, 5000);
    // tolerance 1e-13 relative: same formula, different evaluation order
    ref.forEach((r, i) => expect(Math.abs(out[i] - r)).toBeLessThanOrEqual(1e-13 * Math.abs(r)));
    // Jacobian pattern: ḣ depends on v only; v̇ on h, v, m, T; ṁ on T
    expect(Array.from(p.dynamics.jacRows)).toEqual([0, 1, 1, 1, 1, 2]);
    expect(Array.from(p.dynamics.jacCols)).toEqual([2, 1, 2, 3, 4, 4]);
  });

  it("constants, bounds from expressions, horizon and sense", () => {
    expect(p.constants.c).toBeCloseTo(215 * 9.80665, 12);
    expect(p.states[2]).toEqual({ name: "m", unit: "kg", lower: 0.55 * 180, upper: 180, scale: 100 });
    expect(p.controls[0].upper).toBe(6500);
    expect(p.horizon).toEqual({ kind: "free", t0: 0, lower: 5, upper: 400, guess: 120 });
    expect([p.sense, p.objectiveSign]).toEqual(["max", -1]);
    expect(p.defaults).toEqual({ intervals: 60, degree: 4 });
  });

  it("endpoint rows: initial conditions, final conditions, then general constraints, over e = [t0, x(t0), tf, x(tf)]", () => {
    expect(p.symbolic.endpointInputs).toEqual(["t0", "initial(h)", "initial(v)", "initial(m)", "tf", "final(h)", "final(v)", "final(m)"]);
    expect(p.endpointInfo.map((r) => r.name)).toEqual(["initial(h)", "initial(v)", "initial(m)", "final(v)", "final(m)"]);
    expect(p.endpointInfo[2]).toEqual({ name: "initial(m)", lower: 180, upper: 180 });
    expect(Array.from(p.endpoint.jacCols)).toEqual([1, 2, 3, 6, 7]);
    const e = Float64Array.of(0, 1, 2, 3, 100, 5, 6, 7);
    const out = new Float64Array(5);
    p.endpoint.eval(e, out);
    expect(Array.from(out)).toEqual([1, 2, 3, 6, 7]);
    // terminal cost final(h): ∂/∂e_5 = 1, no Hessian
    expect(Array.from(p.terminalCost!.jacCols)).toEqual([5]);
    expect(p.terminalCost!.hessRows.length).toBe(0);
    expect(p.runningCost).toBeNull();
    expect(p.pathInfo).toEqual([{ name: "qlimit", lower: -Infinity, upper: 45000 }]);
  });

  it("linear guess with explicit [start, end] values and default end values", () => {
    const g = new Float64Array(4);
    p.guess.at(0.25, g);
    // h: [0, 20000] given; v: [0, 0] given; m: 180 → 99 (fixed initial, one-sided final); T: mid-bounds 3250
    expect(Array.from(g)).toEqual([5000, 0, 180 + 0.25 * (99 - 180), 3250]);
    expect(p.guess.tf).toBe(120);
  });

  it("TeX of every expression renders with KaTeX", () => {
    expect(p.symbolic.tex["dynamics.v"]).toBe("\\frac{ T- D}{ m}- g_{0}");
    expect(p.symbolic.tex["intermediates.rho"]).toBe("\\rho_{0}\\cdot\\exp\\left(\\frac{- h}{ H}\\right)");
    expect(p.symbolic.tex["objective.terminal"]).toBe("h(t_{f})");
    for (const [key, tex] of Object.entries(p.symbolic.tex)) {
      expect(() => katex.renderToString(tex, { throwOnError: true }), key).not.toThrow();
    }
  });

  it("symbolic trees have intermediates substituted", () => {
    expect(p.symbolic.dynamics[1].toString()).toContain("exp(-h / H)");
    expect(p.symbolic.path[0].toString()).not.toMatch(/\bq\b/);
  });
});

const made: string[] = [];
afterAll(() => made.forEach((d) => rmSync(d, { recursive: true, force: true })));

function tempProblem(files: Record<string, string>): string {
  const dir = mkdtempSync(path.join(tmpdir(), "arcwatch-problem-"));
  made.push(dir);
  const folder = path.join(dir, "lab-cart");
  mkdirSync(folder);
  for (const [n, t] of Object.entries(files)) writeFileSync(path.join(folder, n), t);
  return folder;
}

const CART = {
  format: "arcwatch-problem/1",
  title: "Lab cart",
  description: "Double integrator moved one metre in one second with least effort.",
  tags: ["smooth", "fixed-final-time"],
  constants: { k: 2, unusedK: 1 },
  states: [{ name: "x" }, { name: "v" }],
  controls: [{ name: "u", lower: -10, upper: 10 }],
  dynamics: { x: "v", v: "u" },
  horizon: { finalTime: { fixed: 1 } },
  initial: { x: 0, v: 0 },
  final: { x: 1, v: 0 },
  objective: { sense: "min", running: "0.5*u^2 + 0*abs(u)" },
  guess: { kind: "trajectory", file: "guess.csv" },
  reference: {
    objective: { value: 6, tolerance: 1e-6, provenance: { kind: "analytic", detail: "u = 6 − 12t, J = ∫ ½u² dt = 6" } },
    trajectory: { file: "reference.csv", provenance: { kind: "analytic", detail: "x = 3t² − 2t³" } },
  },
};
const GUESS = "t,x,u\n0,0,6\n0.5,0.5,0\n1,1,-6\n";
const REFERENCE = "# x = 3t^2 - 2t^3, v = 6t - 6t^2, u = 6 - 12t\nt,x,v,u,lambda_x\n0,0,0,6,12\n0.5,0.5,1.5,0,12\n1,1,0,-6,12\n";

describe("files next to problem.json", () => {
  it("trajectory guess, reference trajectory, warnings", () => {
    const folder = tempProblem({ "problem.json": JSON.stringify(CART), "guess.csv": GUESS, "reference.csv": REFERENCE });
    const p = mustLoad(folder);
    const g = new Float64Array(3);
    p.guess.at(0.75, g);
    // x from the table (0.75), v not in guess.csv: default line 0 → 0, u interpolated: −3
    expect(Array.from(g)).toEqual([0.75, 0, -3]);
    expect(p.reference.trajectory!.t).toEqual(Float64Array.of(0, 0.5, 1));
    expect(Object.keys(p.reference.trajectory!.columns)).toEqual(["x", "v", "u", "lambda_x"]);
    expect(p.reference.objective).toEqual(CART.reference.objective);
    expect(p.warnings.some((w) => w.includes("constant 'unusedK' is never used"))).toBe(true);
    expect(p.warnings.some((w) => w.includes("constant 'k' is never used"))).toBe(true);
    expect(p.warnings.some((w) => w.includes("objective.running: abs is not smooth"))).toBe(true);
  });

  it("the version hash covers every file, and an edited file recompiles", () => {
    const files = { problemJson: JSON.stringify(CART), guessCsv: GUESS, referenceCsv: REFERENCE };
    const h0 = problemVersionHash(files);
    expect(problemVersionHash({ ...files })).toBe(h0);
    expect(problemVersionHash({ ...files, guessCsv: GUESS + "\n" })).not.toBe(h0);
    expect(problemVersionHash({ ...files, referenceCsv: REFERENCE.replace("12\n", "12.0\n") })).not.toBe(h0);
    // moving bytes from one file to the next changes the hash (framing)
    expect(problemVersionHash({ problemJson: "ab", guessCsv: "c" })).not.toBe(problemVersionHash({ problemJson: "a", guessCsv: "bc" }));

    const folder = tempProblem({ "problem.json": JSON.stringify(CART), "guess.csv": GUESS, "reference.csv": REFERENCE });
    const a = mustLoad(folder);
    expect(mustLoad(path.join(folder, "problem.json"))).toBe(a); // cached
    expect(a.versionHash).toBe(h0);
    writeFileSync(path.join(folder, "guess.csv"), GUESS.replace("0.5,0.5,0", "0.5,0.4,0"));
    const b = mustLoad(folder);
    expect(b).not.toBe(a);
    expect(b.versionHash).not.toBe(a.versionHash);
  });

  it("loads by id from a library folder", () => {
    const folder = tempProblem({ "problem.json": JSON.stringify(CART), "guess.csv": GUESS, "reference.csv": REFERENCE });
    const r = loadProblem("lab-cart", path.dirname(folder));
    expect(r.ok && r.problem.id).toBe("lab-cart");
    const missing = loadProblem("no-such-problem", path.dirname(folder));
    expect(missing.ok).toBe(false);
    expect(loadProblemById("lab-cart", path.dirname(folder)).ok).toBe(true);
    for (const bad of ["../lab-cart", "..", "a/b", "/etc", ".hidden", ""]) {
      const r = loadProblemById(bad, path.join(path.dirname(folder), "lab-cart"));
      expect(r.ok, bad).toBe(false);
      if (!r.ok) expect(r.errors[0].message).toMatch(/is not a problem id/);
    }
  });

  it("compileProblemSource reports a missing guess file with its JSON path", () => {
    const r = compileProblemSource("lab-cart", { problemJson: JSON.stringify(CART), referenceCsv: REFERENCE });
    expect(r.ok).toBe(false);
    if (!r.ok) {
      expect(r.errors.map(formatProblemError)).toEqual([
        "problems/lab-cart/problem.json: guess.file: file 'guess.csv' was not found next to problem.json",
      ]);
    }
  });

  it("constant guess holds states at their initial values; a plain free horizon guesses the middle", () => {
    const doc = {
      ...CART,
      guess: { kind: "constant", controls: { u: 2 } },
      horizon: { finalTime: { free: { lower: 0.5, upper: 3 } } },
      reference: {},
    };
    const r = compileProblemSource("c", { problemJson: JSON.stringify(doc) });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    const g = new Float64Array(3);
    r.problem.guess.at(0.9, g);
    expect(Array.from(g)).toEqual([0, 0, 2]);
    expect(r.problem.guess.tf).toBe(1.75);
    expect(r.problem.horizon).toEqual({ kind: "free", t0: 0, lower: 0.5, upper: 3, guess: 1.75 });
  });
});

describe("the DEVELOPERS.md example", () => {
  it("compiles once its comments are removed", () => {
    const doc = readFileSync("DEVELOPERS.md", "utf8");
    const section = doc.slice(doc.indexOf("## Problem files"));
    const m = /```jsonc\n([\s\S]*?)```/.exec(section);
    expect(m).not.toBeNull();
    const json = m![1].replace(/^\s*\/\/.*$/gm, "");
    const csv = "t,h,v,m\n0,0,0,1\n0.2,0.01,0,0.8\n";
    const r = compileProblemSource("kestrel-doc", { problemJson: json, referenceCsv: csv });
    if (!r.ok) throw new Error(r.errors.map(formatProblemError).join("\n"));
    expect(r.problem.endpointInfo.map((e) => e.name)).toEqual(["initial(h)", "initial(v)", "initial(m)", "final(m)", "climb"]);
  });
});
