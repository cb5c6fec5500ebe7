/**
 * Outcomes other than "optimal": every one is a result with a status and a message, never an
 * exception or a hang. Small problems written by hand; expected statuses follow from their
 * mathematics (stated beside each case).
 */
import { describe, it, expect } from "vitest";
import { solveNlp, type NlpProblem } from "~/engine/nlp";
import { makeProblem, type DenseSpec } from "./helpers/dense-problem";
import { HS } from "./helpers/hock-schittkowski";

const INF = Infinity;
const hs = (name: string) => HS.find((s) => s.name === name)!;

describe("infeasible problems end with status infeasible", () => {
  it("two parallel equalities x1 + x2 = 1 and x1 + x2 = 3 (inconsistent linear system)", () => {
    const spec: DenseSpec = {
      name: "parallel", n: 2, m: 2, x0: [0, 0], gL: [1, 3], gU: [1, 3], fStar: NaN, source: "by hand",
      f: (x) => x[0] ** 2 + x[1] ** 2,
      grad: (x, o) => { o[0] = 2 * x[0]; o[1] = 2 * x[1]; },
      g: (x, o) => { o[0] = x[0] + x[1]; o[1] = x[0] + x[1]; },
      jac: (_x, a) => { a(0, 0, 1); a(0, 1, 1); a(1, 0, 1); a(1, 1, 1); },
      hess: (_x, s, _l, a) => { a(0, 0, 2 * s); a(1, 1, 2 * s); },
    };
    const r = solveNlp(makeProblem(spec));
    expect(r.status, r.message).toBe("infeasible");
    // min over x of max(|s − 1|, |s − 3|) with s = x1 + x2 is 1 (at s = 2); restoration
    // minimises the ℓ1 violation, any s ∈ [1, 3] gives ‖c‖∞ ≥ 1.
    expect(r.infPr).toBeGreaterThanOrEqual(1 - 1e-6);
    // The returned point minimises the ℓ1 violation |s − 1| + |s − 3| = 2: any s ∈ [1, 3].
    expect(r.g[0]).toBeGreaterThanOrEqual(1 - 1e-6);
    expect(r.g[0]).toBeLessThanOrEqual(3 + 1e-6);
  });

  it("x² ≤ −1 (nonlinear, no real solution)", () => {
    const spec: DenseSpec = {
      name: "square", n: 1, m: 1, x0: [2], gL: [-INF], gU: [-1], fStar: NaN, source: "by hand",
      f: (x) => (x[0] - 1) ** 2,
      grad: (x, o) => { o[0] = 2 * (x[0] - 1); },
      g: (x, o) => { o[0] = x[0] ** 2; },
      jac: (x, a) => { a(0, 0, 2 * x[0]); },
      hess: (_x, s, l, a) => { a(0, 0, 2 * s + 2 * l[0]); },
    };
    const r = solveNlp(makeProblem(spec));
    expect(r.status, r.message).toBe("infeasible");
    expect(r.infPr).toBeGreaterThan(0.5); // the violation x² + 1 ≥ 1 everywhere
    expect(Math.abs(r.x[0])).toBeLessThan(1e-4); // and is smallest at x = 0
  });

  it("bound 0 ≤ x ≤ 1 against the constraint x ≥ 2", () => {
    const spec: DenseSpec = {
      name: "box", n: 1, m: 1, x0: [0.5], xL: [0], xU: [1], gL: [2], gU: [INF], fStar: NaN, source: "by hand",
      f: (x) => x[0],
      grad: (_x, o) => { o[0] = 1; },
      g: (x, o) => { o[0] = x[0]; },
      jac: (_x, a) => { a(0, 0, 1); },
      hess: () => {},
    };
    const r = solveNlp(makeProblem(spec));
    expect(r.status, r.message).toBe("infeasible");
    expect(r.infPr).toBeGreaterThan(0.9);
  });

  it("crossed bounds xL > xU are reported without iterating", () => {
    const p = makeProblem(hs("HS21"));
    p.xL[0] = 3; p.xU[0] = 2;
    const r = solveNlp(p);
    expect(r.status).toBe("infeasible");
    expect(r.message).toContain("x[0]");
    expect(r.iterations).toBe(0);
  });
});

describe("unbounded problems end with unbounded or diverging", () => {
  it("min −x1 − x2 subject to x1 − x2 = 0, x ≥ 0", () => {
    const spec: DenseSpec = {
      name: "ray", n: 2, m: 1, x0: [1, 1], xL: [0, 0], gL: [0], gU: [0], fStar: NaN, source: "by hand",
      f: (x) => -x[0] - x[1],
      grad: (_x, o) => { o[0] = -1; o[1] = -1; },
      g: (x, o) => { o[0] = x[0] - x[1]; },
      jac: (_x, a) => { a(0, 0, 1); a(0, 1, -1); },
      hess: () => {},
    };
    const r = solveNlp(makeProblem(spec));
    expect(["unbounded", "diverging"], r.message).toContain(r.status);
    expect(r.iterations).toBeLessThan(3000);
  });

  it("min −x² (non-convex, unconstrained)", () => {
    const spec: DenseSpec = {
      name: "cap", n: 1, m: 0, x0: [0.5], gL: [], gU: [], fStar: NaN, source: "by hand",
      f: (x) => -(x[0] ** 2),
      grad: (x, o) => { o[0] = -2 * x[0]; },
      g: () => {},
      jac: () => {},
      hess: (_x, s, _l, a) => { a(0, 0, -2 * s); },
    };
    const r = solveNlp(makeProblem(spec));
    expect(["unbounded", "diverging"], r.message).toContain(r.status);
  });
});

describe("limits", () => {
  it("iteration limit is honoured", () => {
    const r = solveNlp(makeProblem(hs("HS7")), { maxIter: 5 });
    expect(r.status).toBe("iteration_limit");
    expect(r.iterations).toBe(5);
    expect(r.log.length).toBe(6); // iterate 0 and five steps
  });

  it("maxIter 0 returns the starting point's record only", () => {
    const r = solveNlp(makeProblem(hs("HS71")), { maxIter: 0 });
    expect(r.status).toBe("iteration_limit");
    expect(r.log.length).toBe(1);
  });

  it("time limit is honoured", () => {
    const r = solveNlp(makeProblem(hs("HS100")), { maxSeconds: 1e-9 });
    expect(r.status).toBe("time_limit");
  });

  it("bad options come back as a result naming the field", () => {
    const r = solveNlp(makeProblem(hs("HS71")), { tol: -1 });
    expect(r.status).toBe("invalid_model");
    expect(r.message).toContain("options.tol");
  });
});

function named(p: NlpProblem): NlpProblem {
  return { ...p, variableName: (i) => `thrust at node ${i}`, constraintName: (j) => `defect ${j}` };
}

describe("NaN and Inf from the model", () => {
  it("NaN objective at the start: invalid_model naming the function", () => {
    const p = makeProblem(hs("HS71"));
    const r = solveNlp({ ...p, f: () => NaN });
    expect(r.status).toBe("invalid_model");
    expect(r.message).toMatch(/\bf\b/);
  });

  it("Inf in the gradient: invalid_model naming the variable", () => {
    const p = named(makeProblem(hs("HS71")));
    const r = solveNlp({ ...p, gradF: (x, o) => { p.gradF(x, o); o[2] = Infinity; } });
    expect(r.status).toBe("invalid_model");
    expect(r.message).toContain("gradF");
    expect(r.message).toContain("x[2] (thrust at node 2)");
  });

  it("NaN in a constraint: invalid_model naming the row", () => {
    const p = named(makeProblem(hs("HS71")));
    const r = solveNlp({ ...p, g: (x, o) => { p.g(x, o); o[1] = NaN; } });
    expect(r.status).toBe("invalid_model");
    expect(r.message).toContain("g[1] (defect 1)");
  });

  it("a callback that throws is a result, not an exception", () => {
    const p = makeProblem(hs("HS71"));
    const r = solveNlp({ ...p, jacValues: () => { throw new Error("table lookup out of range"); } });
    expect(r.status).toBe("invalid_model");
    expect(r.message).toContain("table lookup out of range");
  });

  it("NaN in the Hessian during the solve: numerical_trouble naming the entry", () => {
    const p = named(makeProblem(hs("HS71")));
    let calls = 0;
    const r = solveNlp({ ...p, hessValues: (x, s, l, o) => { p.hessValues(x, s, l, o); if (++calls === 3) o[0] = NaN; } });
    expect(r.status).toBe("numerical_trouble");
    expect(r.message).toContain("hessValues");
    expect(r.message).toContain("thrust at node 0");
  });

  it("NaN in the Jacobian during the solve: numerical_trouble naming the entry", () => {
    // Kept entries are checked in the pass that scales them (reformulation.ts jac); HS71's
    // dense pattern: entry 5 is dg[1]/dx[1].
    const p = named(makeProblem(hs("HS71")));
    let calls = 0;
    const r = solveNlp({ ...p, jacValues: (x, o) => { p.jacValues(x, o); if (++calls === 4) o[5] = NaN; } });
    expect(r.status).toBe("numerical_trouble");
    expect(r.message).toContain("jacValues: entry 5, dg[1] (defect 1)/dx[1] (thrust at node 1) is NaN");
  });

  it("Inf in a Jacobian entry of a fixed variable during the solve is reported as well", () => {
    // x[0] fixed by its bounds leaves the iteration with its column (entries 0 and 4 of the dense
    // pattern); those entries are still checked on every evaluation.
    const p = named(makeProblem(hs("HS71")));
    p.xL[0] = 1;
    p.xU[0] = 1;
    p.x0[0] = 1;
    let calls = 0;
    const r = solveNlp({ ...p, jacValues: (x, o) => { p.jacValues(x, o); if (++calls === 4) o[4] = Infinity; } });
    expect(r.status).toBe("numerical_trouble");
    expect(r.message).toContain("jacValues: entry 4, dg[1] (defect 1)/dx[0] (thrust at node 0) is Infinity");
  });

  it("NaN outside the domain during the line search cuts the step", () => {
    // f = √(1 + (x−1)²): Newton from x₀ = 3 jumps to x = 3 − 2·5 = −7, where f is NaN
    // (domain x > −2 by construction); the line search must back off and still reach x* = 1.
    const spec: DenseSpec = {
      name: "domain", n: 1, m: 0, x0: [3], gL: [], gU: [], fStar: 1, source: "by hand",
      f: (x) => (x[0] < -2 ? NaN : Math.sqrt(1 + (x[0] - 1) ** 2)),
      grad: (x, o) => { o[0] = (x[0] - 1) / Math.sqrt(1 + (x[0] - 1) ** 2); },
      g: () => {},
      jac: () => {},
      hess: (x, s, _l, a) => { a(0, 0, s / (1 + (x[0] - 1) ** 2) ** 1.5); },
    };
    const r = solveNlp(makeProblem(spec));
    expect(r.status, r.message).toBe("optimal");
    expect(Math.abs(r.x[0] - 1)).toBeLessThan(1e-6);
    expect(r.log[1].lsTrials).toBeGreaterThan(1);
  });
});

describe("warm start", () => {
  for (const name of ["HS71", "HS100", "HS43"]) {
    it(`${name}: restarting from the solution and its multipliers takes fewer iterations`, () => {
      const p = makeProblem(hs(name));
      const cold = solveNlp(p);
      expect(cold.status).toBe("optimal");
      const q = makeProblem(hs(name));
      q.x0.set(cold.x);
      const warm = solveNlp(q, { warmStart: { lambda: cold.lambda, zL: cold.zL, zU: cold.zU, mu: 1e-6 } });
      expect(warm.status, warm.message).toBe("optimal");
      expect(Math.abs(warm.f - cold.f)).toBeLessThanOrEqual(1e-6 * Math.max(1, Math.abs(cold.f)));
      expect(warm.iterations).toBeLessThan(cold.iterations);
    });
  }
});

describe("multipliers follow the sign convention of types.ts", () => {
  it("HS71: ∇f + Jᵀλ − zL + zU = 0 at the solution (1e-6), λ of the ≥ row is ≤ 0", () => {
    const spec = hs("HS71");
    const r = solveNlp(makeProblem(spec));
    const gr = new Float64Array(4);
    spec.grad(r.x, gr);
    const res = Float64Array.from(gr);
    spec.jac(r.x, (row, c, v) => { res[c] += r.lambda[row] * v; });
    for (let i = 0; i < 4; i++) expect(Math.abs(res[i] - r.zL[i] + r.zU[i])).toBeLessThan(1e-6);
    expect(r.lambda[0]).toBeLessThan(0); // x1x2x3x4 ≥ 25 active at its lower side
  });
});
