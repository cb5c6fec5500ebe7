/**
 * "Cost to reach tolerance ε with refinement" per scheme, from the refined cases (case_results with
 * mesh_tolerance set) of a set of runs — the compare page's panel beside the uniform-mesh
 * work–precision diagram.
 *
 * Per scheme and tolerance: how many cases met ε (final largest estimate ≤ ε), and over the cases that
 * met it the median of the whole refinement's solve time (medianSeconds of a refined case times every
 * pass together), of the final mesh points, of the passes and of the NLP iterations (all passes). A
 * case that did not meet ε has no cost: it is counted, not averaged in.
 */
import { and, eq, inArray, isNotNull } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { caseResults } from "~/db/schema";
import { median } from "~/engine/stats/summary";

export interface RefinementCostRow {
  scheme: string;
  tolerance: number;
  cases: number;
  met: number;
  medianSeconds: number | null;
  medianPoints: number | null;
  medianPasses: number | null;
  medianIterations: number | null;
}

export interface RefinementCaseCost {
  scheme: string;
  tolerance: number;
  met: boolean;
  seconds: number | null;
  points: number | null;
  passes: number | null;
  iterations: number | null;
}

const med = (v: (number | null)[]): number | null => {
  const x = v.filter((a): a is number => a !== null && Number.isFinite(a));
  return x.length ? median(x) : null;
};

/** Groups refined cases by (scheme, tolerance); exported for tests. */
export function refinementCostRows(cases: RefinementCaseCost[], schemeOrder: readonly string[]): RefinementCostRow[] {
  const groups = new Map<string, RefinementCaseCost[]>();
  for (const c of cases) {
    const k = `${c.scheme}\u0000${c.tolerance}`;
    const g = groups.get(k);
    if (g) g.push(c);
    else groups.set(k, [c]);
  }
  const rank = (s: string) => {
    const i = schemeOrder.indexOf(s);
    return i < 0 ? schemeOrder.length : i;
  };
  return [...groups.values()]
    .map((g) => {
      const ok = g.filter((c) => c.met);
      return {
        scheme: g[0]!.scheme,
        tolerance: g[0]!.tolerance,
        cases: g.length,
        met: ok.length,
        medianSeconds: med(ok.map((c) => c.seconds)),
        medianPoints: med(ok.map((c) => c.points)),
        medianPasses: med(ok.map((c) => c.passes)),
        medianIterations: med(ok.map((c) => c.iterations)),
      };
    })
    .sort((a, b) => b.tolerance - a.tolerance || rank(a.scheme) - rank(b.scheme) || a.scheme.localeCompare(b.scheme));
}

export function refinementCostForRuns(db: Db, runIds: string[], problem: string | null, schemeOrder: readonly string[]): RefinementCostRow[] {
  if (runIds.length === 0) return [];
  const rows = db
    .select({
      scheme: caseResults.scheme, tolerance: caseResults.meshTolerance, met: caseResults.meshToleranceMet,
      seconds: caseResults.medianSeconds, points: caseResults.meshPoints, passes: caseResults.meshPasses, iterations: caseResults.iterations,
    })
    .from(caseResults)
    .where(and(inArray(caseResults.runId, runIds), isNotNull(caseResults.meshTolerance), ...(problem ? [eq(caseResults.problemId, problem)] : [])))
    .all();
  return refinementCostRows(
    rows.map((r) => ({ scheme: r.scheme, tolerance: r.tolerance!, met: r.met === true, seconds: r.seconds, points: r.points, passes: r.passes, iterations: r.iterations })),
    schemeOrder,
  );
}
