/**
 * Arc structure of a direct solution (any scheme): pointwise classification (classify.ts), runs
 * and the minimum-length filter (merge.ts), junction refinement (junctions.ts).
 *
 * Inputs: the compiled problem (bounds, path constraints, affinity of H in u, switching
 * functions from its exact derivatives) and the scheme's Solution on its own control grid tu
 * (length N); costate estimates are used when present. Output: one arc sequence per control and
 * a signature such as "upper|singular|boundary:qmax|lower".
 */
import type { CompiledProblem } from "../problem/types";
import type { Solution } from "../schemes/types";
import { classifyPoints, constraintDistances, controlRange, costateSign } from "./classify";
import { junctionTime } from "./junctions";
import { filterRuns, runsOf } from "./merge";
import { relabelRinging } from "./ringing";
import { controlAffine, switchingFunctions } from "./switching";
import type { Arc, ArcDetectionOptions, ArcKind, ArcStructure, ControlArcs } from "./types";
import { structureSignature } from "./types";

export const arcDefaults: Required<ArcDetectionOptions> = {
  boundTol: 1e-3,
  activeTol: 1e-4,
  bridgeTol: 5e-3,
  switchTol: 0.25,
  minFraction: 0.02,
  minPoints: 2,
};

/** Sample point-function inputs z = [t, x, u] at a few grid points (for affinity checks). */
function samplePoints(problem: CompiledProblem, sol: Solution): Float64Array[] {
  const { nx, nu } = problem;
  const out: Float64Array[] = [];
  const n = sol.tu.length;
  const x = new Float64Array(nx);
  for (const k of [0, Math.floor(n / 3), Math.floor((2 * n) / 3), n - 1]) {
    if (k < 0 || k >= n) continue;
    const z = new Float64Array(1 + nx + nu);
    z[0] = sol.tu[k];
    sol.stateAt(sol.tu[k], x);
    z.set(x, 1);
    for (let j = 0; j < nu; j++) z[1 + nx + j] = sol.controls[j][k];
    out.push(z);
  }
  return out;
}

export function detectArcs(problem: CompiledProblem, sol: Solution, options: ArcDetectionOptions = {}): ArcStructure {
  const opt = { ...arcDefaults, ...options };
  const notes: string[] = [];
  const tu = sol.tu;
  if (tu.length === 0) throw new Error(`arc detection (${problem.id}): the solution has an empty control grid`);
  const affine = controlAffine(problem, samplePoints(problem, sol));
  const constraints = constraintDistances(problem, sol, opt.activeTol, opt.bridgeTol);
  let sigma = switchingFunctions(problem, sol);
  let lambdaSign: 1 | -1 | 0 = 0;
  const minDuration = opt.minFraction * (sol.tf - sol.t0);

  // Costate sign convention: decided on the first bounded affine control's bang points.
  if (sigma) {
    const sigma0 = sigma;
    for (let j = 0; j < problem.nu; j++) {
      if (!affine[j]) continue;
      const c = problem.controls[j];
      const plain = classifyPoints({
        control: j, lower: c.lower, upper: c.upper, u: sol.controls[j], affine: false, sigma: null,
        constraints: [], boundTol: opt.boundTol, switchTol: opt.switchTol,
      });
      const s = costateSign(plain, sigma0[j], opt.switchTol);
      lambdaSign = s;
      if (s === -1) {
        notes.push("costate estimates have the opposite sign convention; negated");
        sigma = switchingFunctions(problem, sol, -1);
      }
      if (s !== 0) break;
    }
  }

  const controls: ControlArcs[] = [];
  for (let j = 0; j < problem.nu; j++) {
    const c = problem.controls[j];
    const u = sol.controls[j];
    const sj = sigma ? sigma[j] : null;
    let labels = classifyPoints({
      control: j, lower: c.lower, upper: c.upper, u, affine: affine[j], sigma: sj,
      constraints, boundTol: opt.boundTol, switchTol: opt.switchTol,
    });
    // Singular arcs whose mesh-scale ringing touches the bounds (ringing.ts): read from the
    // primal labels where the switching function is negligible.
    if (affine[j]) labels = relabelRinging(labels, sj);
    const runs = filterRuns(runsOf(labels), tu, sol.t0, sol.tf, minDuration, opt.minPoints);
    const ctx = {
      tu, u, lower: c.lower, upper: c.upper, tolU: opt.boundTol * controlRange(c.lower, c.upper, u),
      sigma: sj, constraints,
    };
    const junctions: number[] = [];
    for (let r = 0; r + 1 < runs.length; r++) {
      const bangRun = runs[r].label === "lower" || runs[r].label === "upper" ? runs[r] : runs[r + 1];
      const tj = junctionTime(ctx, runs[r].label, runs[r].k1, runs[r + 1].label, runs[r + 1].k0, bangRun);
      junctions.push(Math.max(tj, junctions.length ? junctions[junctions.length - 1] : sol.t0));
    }
    const arcs: Arc[] = runs.map((run, r) => {
      const boundary = run.label.startsWith("boundary:");
      const arc: Arc = {
        kind: (boundary ? "boundary" : run.label) as ArcKind,
        control: c.name,
        t0: r === 0 ? sol.t0 : junctions[r - 1],
        t1: r === runs.length - 1 ? sol.tf : junctions[r],
      };
      if (boundary) arc.constraint = run.label.slice(9);
      return arc;
    });
    controls.push({ control: c.name, arcs, junctions });
  }
  if (!affine.every((a) => !a) && !sigma) notes.push("no costate estimates: singular arcs recognised from control values only");
  return { controls, signature: structureSignature(controls), usedSwitchingFunction: sigma !== null, costateSign: lambdaSign, notes };
}
