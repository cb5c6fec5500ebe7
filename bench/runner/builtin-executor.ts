/**
 * Executor for Arcwatch's own engine: loads the problem with the engine's loader (compiled once
 * per worker and cached by content hash) and times `solveProblem` for the case's scheme and mesh.
 * After timing, the arc structure of a converged solve is attached (./arcs-from-report.ts).
 */
import { ProblemLibrary } from "../../app/engine/problem/library";
import { loadFromLibrary } from "../../app/engine/problem/load";
import { solveProblem } from "../../app/engine/solve";
import type { Mesh } from "../../app/engine/schemes/types";
import type { CreateExecutor } from "./executor";
import type { CaseReport } from "../../app/runs/types";
import { arcsOfReport } from "./arcs-from-report";

export const createExecutor: CreateExecutor = (context) => {
  const library = new ProblemLibrary(context.libraryRoots);
  return {
    prepare(spec) {
      const loaded = loadFromLibrary(library, spec.problemId);
      if (!loaded.ok) {
        const why = loaded.errors.map((e) => `${e.file}${e.path ? ` ${e.path}` : ""}: ${e.message}`).join("; ");
        throw new Error(`problem ${spec.problemId} does not load: ${why}`);
      }
      const mesh: Mesh = {
        intervals: spec.intervals,
        ...(spec.degree !== undefined ? { degree: spec.degree } : {}),
        ...(spec.variant ? { variant: spec.variant } : {}),
      };
      const problem = loaded.problem;
      return {
        solve: (): CaseReport => solveProblem(problem, spec.scheme, mesh),
        // Arc structure for the "structure" rule: the engine's own (from the scheme's Solution), or,
        // when a report carries none, rebuilt from its trajectory after timing.
        finish: (report: CaseReport): CaseReport => {
          const r = report as ReturnType<typeof solveProblem>;
          if (r.status !== "optimal" && r.status !== "acceptable") return report;
          if (r.arcs) return report;
          const arcs = arcsOfReport(problem, spec.scheme, r.trajectory, r.objective);
          return arcs ? { ...report, arcs } : report;
        },
      };
    },
  };
};
