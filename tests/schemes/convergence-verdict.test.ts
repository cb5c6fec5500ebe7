/**
 * An order is only shown where the errors support one (issue 17: "a number Arcwatch shows must
 * mean what its label says; where it cannot, say so on screen"). convergence-verdict.ts reads the
 * error sequence before the least-squares fit of convergence-order.ts:
 *
 * - errors e = C N^(−p) from some N₀ on, above that line before it, are "pre-asymptotic" below N₀
 *   and the fit over N ≥ N₀ gives p exactly (log e is then linear in log N; Betts, Practical
 *   Methods for Optimal Control Using Nonlinear Programming, 2nd ed., SIAM 2010, §4.7 for the
 *   model), where a fit over every mesh gives a made-up order;
 * - an error that rises at the finest mesh gives no order;
 * - the solver share (duality gap ÷ error) rules the solver out below 0.1; above, the gap (an upper
 *   bound on the solver's part) says only that the solver is possible.
 *
 * The library cases: explicit Euler on tern-orbit-raise is first order (Dontchev and Hager, Math.
 * Comp. 70, 2001) but its objective error at N = 30 is below the one at N = 60 (1.07e-4 / 1.65e-4 /
 * 1.09e-4 / 6.1e-5 at N = 30 … 240, bench/mesh-monotonicity.bench.ts, 2026-12-02), and the solver's
 * share is below 1e-6 of the error: the compare page must call N = 30 pre-asymptotic, not print
 * the slope through all four meshes (0.30; 0.72 from N = 60).
 */
import { describe, expect, it } from "vitest";
import { convergenceVerdict, solverErrorFromMessage } from "~/engine/analysis/convergence-verdict";
import { fitConvergenceOrder } from "~/engine/analysis/convergence-order";
import { buildViews } from "~/models/compare.server";
import { loadLibrary } from "~/engine/problem/load";
import { solveProblem } from "~/engine/solve";

const pt = (problemId: string, scheme: string, intervals: number, error: number, solverError: number | null = null) => ({ caseId: intervals, problemId, scheme, intervals, degree: null, solved: true, error, seconds: 0.01, solverError });

describe("convergence verdict", () => {
  it("fits from the first mesh of the falling tail and names the coarser meshes pre-asymptotic", () => {
    // e = 1e-2 · (60/N) for N ≥ 60 (order 1 exactly); N = 30 below that line.
    const Ns = [30, 60, 120, 240];
    const e = [6e-3, 1e-2, 5e-3, 2.5e-3];
    const v = convergenceVerdict(Ns.map((N, k) => ({ intervals: N, error: e[k]!, solverError: e[k]! * 1e-6 })));
    expect(v.kind).toBe("pre-asymptotic");
    expect(v.fromIntervals).toBe(60);
    expect(v.order).toBeCloseTo(1, 12);
    expect(v.cause).toBe("discretisation");
    expect(v.solverShare).toBeCloseTo(1e-6, 12);
    expect(v.note).toMatch(/pre-asymptotic below N = 60 \(discretisation; solver share ≤ 1e-6\)/);
    // What the page showed before: the slope through all four points, far from 1.
    expect(Math.abs(fitConvergenceOrder(Ns, e)!.order - 1)).toBeGreaterThan(0.3);
  });

  it("gives no order when the finest mesh's error rises, and names the solver as possible when its share is large", () => {
    const v = convergenceVerdict([
      { intervals: 60, error: 8e-7, solverError: 1e-7 },
      { intervals: 120, error: 1.7e-6, solverError: 1.6e-6 },
      { intervals: 240, error: 3.3e-6, solverError: 3.2e-6 },
    ]);
    expect(v.kind).toBe("not-monotone");
    expect(v.order).toBeNull();
    expect(v.cause).toBe("solver");
    expect(v.note).toBe("not monotone: the error at N = 240 is not below N = 120 (solver possible; solver share 1e0, an upper bound on its part); no order");
  });

  it("keeps the plain fit for a falling sequence and treats errors at the floor as done", () => {
    const Ns = [10, 20, 40];
    const v = convergenceVerdict(Ns.map((N) => ({ intervals: N, error: 3 * N ** -2, solverError: null })));
    expect(v.kind).toBe("monotone");
    expect(v.order).toBeCloseTo(2, 12);
    expect(v.note).toBe("");
    // 3.9e-9, 2.4e-10, then two errors at the floor that do not fall between themselves.
    const f = convergenceVerdict([30, 60, 120, 240].map((N, k) => ({ intervals: N, error: [3.9e-9, 2.4e-10, 1.5e-11, 2e-11][k]!, solverError: null })));
    expect(f.kind).toBe("monotone");
    const flat = convergenceVerdict([30, 60].map((N) => ({ intervals: N, error: 2.6e-12, solverError: 5e-12 })));
    expect(flat.kind).toBe("at-floor");
    expect(flat.order).toBeNull();
  });

  it("reads the solver's estimate from the solver's own message", () => {
    const p = loadLibrary("problems").problems.find((q) => q.id === "dunlin-rail-shuttle")!;
    const r = solveProblem(p, "trapezoidal", { intervals: 20 }, { keepTrajectory: false, resimulate: false, arcs: false });
    expect(r.errorSplit.solver).not.toBeNull();
    const parsed = solverErrorFromMessage(r.message);
    expect(parsed).not.toBeNull();
    // The message prints three significant digits.
    expect(Math.abs(parsed! - r.errorSplit.solver!)).toBeLessThanOrEqual(0.005 * r.errorSplit.solver! + 1e-300);
    expect(solverErrorFromMessage("acceptable: scaled KKT error ≤ 1e-6 for 15 iterations")).toBeNull();
  });

  it("the comparison view carries the verdict and fits only the asymptotic meshes", () => {
    const v = buildViews([pt("p", "euler", 30, 6e-3, 1e-12), pt("p", "euler", 60, 1e-2, 1e-12), pt("p", "euler", 120, 5e-3, 1e-12), pt("p", "euler", 240, 2.5e-3, 1e-12)], 1e-3);
    const c = v.convergence[0]!;
    expect(c.verdict!.kind).toBe("pre-asymptotic");
    expect(c.fittedOrder).toBeCloseTo(1, 12);
    expect(v.ordersByProblem[0]!.verdicts.euler!.fromIntervals).toBe(60);
    const rising = buildViews([pt("p", "lgr", 60, 8e-7, 1e-7), pt("p", "lgr", 120, 1.7e-6, 1.6e-6)], 1e-3);
    expect(rising.convergence[0]!.fittedOrder).toBeNull();
    expect(rising.ordersByProblem[0]!.orders.lgr).toBeNull();
    expect(rising.ordersByProblem[0]!.verdicts.lgr!.kind).toBe("not-monotone");
  });

  it("tern-orbit-raise explicit Euler: N = 30 is pre-asymptotic, the pattern is the discretisation's", { timeout: 60_000 }, () => {
    const p = loadLibrary("problems").problems.find((q) => q.id === "tern-orbit-raise")!;
    const pts = [30, 60, 120].map((N) => {
      const r = solveProblem(p, "euler", { intervals: N }, { keepTrajectory: false, resimulate: false, arcs: false });
      expect(r.status).toBe("optimal");
      return { intervals: N, error: r.errors.objectiveRel!, solverError: solverErrorFromMessage(r.message)! / Math.abs(r.objective!) };
    });
    const v = convergenceVerdict(pts);
    expect(v.kind).toBe("pre-asymptotic");
    expect(v.fromIntervals).toBe(60);
    expect(v.cause).toBe("discretisation");
    expect(v.solverShare!).toBeLessThan(1e-3);
  });
});
