/**
 * Computes the fine-mesh references of the problems without an analytic solution and writes them
 * into problems/<id>/problem.json ("reference") and problems/<id>/reference.csv:
 *   npx tsx tests/library/make-fine-references.ts [id...]
 * Each problem is solved with LGR on two fine meshes (FINE and a coarser CHECK mesh) at tol 1e-10;
 * the reference is the FINE solution and its tolerance is max(10 × |FINE − CHECK|, 1e-9), so the
 * tolerance states how well the two fine meshes agree. Replaced later by shooting refinement.
 */
import { readFileSync, writeFileSync } from "node:fs";
import { loadProblem, clearProblemCache } from "../../app/engine/problem/load";
import { solveProblem } from "../../app/engine/solve";
import { getScheme } from "../../app/engine/schemes/index";
import { solveNlp } from "../../app/engine/nlp/index";

const CASES: Record<string, { fine: [number, number]; check: [number, number] }> = {
  "kestrel-2-ascent": { fine: [80, 8], check: [40, 8] },
  "marten-lunar-hopper": { fine: [60, 8], check: [30, 8] },
  "tern-orbit-raise": { fine: [20, 8], check: [10, 8] },
  "skua-current-crossing": { fine: [10, 8], check: [5, 8] },
  "ibis-crane-load-flip": { fine: [20, 8], check: [10, 8] },
  "tiercel-upper-stage": { fine: [10, 8], check: [5, 8] },
};

const ids = process.argv.slice(2).length ? process.argv.slice(2) : Object.keys(CASES);
for (const id of ids) {
  clearProblemCache();
  const loaded = loadProblem(id);
  if (!loaded.ok) throw new Error(`${id} does not load`);
  const p = loaded.problem;
  const c = CASES[id];
  const run = ([N, K]: [number, number]) => solveProblem(p, "lgr", { intervals: N, degree: K }, { nlp: { tol: 1e-10, maxIter: 3000 }, resimulate: true });
  const fine = run(c.fine);
  const check = run(c.check);
  if (!["optimal", "acceptable"].includes(fine.status) || !["optimal", "acceptable"].includes(check.status))
    throw new Error(`${id}: fine-mesh solves did not converge (${fine.status}, ${check.status})`);
  const detail = `LGR ${c.fine[0]}x${c.fine[1]}, tol 1e-10 (${fine.status}, ${fine.iterations} iterations, re-simulated miss ${fine.resim?.finalMiss.toExponential(1)}); tolerance = 10 × difference to LGR ${c.check[0]}x${c.check[1]}`;
  const tolOf = (a: number, b: number) => Number(Math.max(10 * Math.abs(a - b), 1e-9).toPrecision(2));
  const file = `problems/${id}/problem.json`;
  const j = JSON.parse(readFileSync(file, "utf8"));
  const ref: Record<string, unknown> = {
    objective: { value: fine.objective, tolerance: tolOf(fine.objective!, check.objective!), provenance: { kind: "fine-mesh", detail } },
  };
  if (p.horizon.kind === "free") ref.finalTime = { value: fine.finalTime, tolerance: tolOf(fine.finalTime!, check.finalTime!), provenance: { kind: "fine-mesh", detail } };
  if (j.reference?.arcs) ref.arcs = j.reference.arcs;
  ref.trajectory = { file: "reference.csv", provenance: { kind: "fine-mesh", detail: `${detail}; states and controls by the LGR interpolants at 201 uniform times` } };
  j.reference = ref;
  writeFileSync(file, JSON.stringify(j, null, 2) + "\n");
  // trajectory: re-transcribe to get the interpolants (same mesh, same solve)
  const tr = getScheme("lgr").transcribe(p, { intervals: c.fine[0], degree: c.fine[1] });
  const sol = tr.recover(solveNlp(tr.nlp, { tol: 1e-10, maxIter: 3000 }));
  const xs = new Float64Array(p.nx), us = new Float64Array(p.nu);
  const lines = [["t", ...p.states.map((s) => s.name), ...p.controls.map((u) => u.name)].join(",")];
  for (let k = 0; k <= 200; k++) {
    const t = sol.t0 + ((sol.tf - sol.t0) * k) / 200;
    sol.stateAt(t, xs);
    sol.controlAt(Math.min(t, sol.tf), us);
    lines.push([t, ...xs, ...us].map((v) => String(v)).join(","));
  }
  writeFileSync(`problems/${id}/reference.csv`, lines.join("\n") + "\n");
  console.log(id, fine.objective, check.objective, fine.finalTime, fine.iterations, fine.resim?.finalMiss);
}
