/**
 * A realistic transcription: the COPS Goddard rocket (Dolan, Moré and Munson, "Benchmarking
 * optimization software with COPS 3.0", ANL/MCS-TM-273, 2004), trapezoidal rule with N = 100
 * intervals, free final time, bang–singular–bang thrust. Published optimum h(t_f) = 1.01283
 * (COPS report, recalled from memory); tolerance 1e-5 absolute (the value is given to 6 digits).
 */
import { describe, it, expect } from "vitest";
import { solveNlp, type NlpProblem } from "~/engine/nlp";
import { goddardProblem, GODDARD_HEIGHT } from "./helpers/goddard";
import { derivativeMismatch, type DenseSpec } from "./helpers/dense-problem";

function asDense(N: number): DenseSpec {
  const p = goddardProblem(N);
  return {
    name: "goddard", n: p.n, m: p.m, x0: [], gL: [], gU: [], fStar: NaN, source: "",
    f: p.f, grad: p.gradF, g: p.g,
    jac: (x, add) => { const v = new Float64Array(p.jacRows.length); p.jacValues(x, v); for (let k = 0; k < v.length; k++) add(p.jacRows[k], p.jacCols[k], v[k]); },
    hess: (x, s, l, add) => { const v = new Float64Array(p.hessRows.length); p.hessValues(x, s, l, v); for (let k = 0; k < v.length; k++) add(p.hessRows[k], p.hessCols[k], v[k]); },
  };
}

describe("COPS Goddard rocket, trapezoidal, N = 100", () => {
  it("hand-written derivatives agree with finite differences (1e-5 relative)", () => {
    const p = goddardProblem(4);
    const x = Float64Array.from(p.x0, (v, i) => v + 0.01 * Math.sin(3 * i + 1));
    const lambda = Float64Array.from({ length: p.m }, (_, j) => Math.cos(j));
    const e = derivativeMismatch(asDense(4), x, 1, lambda);
    expect(e.grad).toBeLessThan(1e-5);
    expect(e.jac).toBeLessThan(1e-5);
    expect(e.hess).toBeLessThan(1e-5);
  });

  it("reaches the published final height", () => {
    const r = solveNlp(goddardProblem(100));
    console.log(`Goddard N=100: ${r.status}, h(t_f) = ${(-r.f).toFixed(7)}, ${r.iterations} iterations, ${r.seconds.toFixed(3)} s`);
    expect(r.status, r.message).toBe("optimal");
    expect(Math.abs(-r.f - GODDARD_HEIGHT)).toBeLessThan(1e-5);
    expect(r.iterations).toBeLessThan(100);
  });

  it("still converges when the boundary conditions are equality rows (degenerate with the bounds)", () => {
    // h(0) = 1, v(0) = 0, m(0) = 1, m(N) = 0.6 as rows x_i = b while the bounds h ≥ 1, v ≥ 0,
    // 0.6 ≤ m ≤ 1 stay: LICQ fails at the solution (DEVELOPERS.md, Decisions).
    const N = 100;
    const p = goddardProblem(N);
    const idx = [0, 1, 2, 4 * N + 2], vals = [1, 0, 1, 0.6];
    const xL = p.xL.slice(), xU = p.xU.slice();
    xU[0] = Infinity; xU[1] = Infinity; xL[2] = 0.6; xL[4 * N + 2] = 0.6; xU[4 * N + 2] = 1;
    const q: NlpProblem = {
      ...p, m: p.m + 4, xL, xU,
      gL: Float64Array.from([...p.gL, ...vals]), gU: Float64Array.from([...p.gU, ...vals]),
      jacRows: Int32Array.from([...p.jacRows, p.m, p.m + 1, p.m + 2, p.m + 3]),
      jacCols: Int32Array.from([...p.jacCols, ...idx]),
      g: (x, o) => { p.g(x, o); for (let k = 0; k < 4; k++) o[p.m + k] = x[idx[k]]; },
      jacValues: (x, o) => { p.jacValues(x, o); for (let k = 0; k < 4; k++) o[o.length - 4 + k] = 1; },
      hessValues: (x, s, l, o) => p.hessValues(x, s, l.subarray(0, p.m), o),
    };
    const r = solveNlp(q);
    const raw = solveNlp(q, { presolveSingletons: false });
    console.log(`Goddard N=100, boundary conditions as rows: ${r.iterations} iterations presolved, ${raw.iterations} without presolve`);
    for (const x of [r, raw]) {
      expect(x.status, x.message).toBe("optimal");
      expect(Math.abs(-x.f - GODDARD_HEIGHT)).toBeLessThan(1e-5);
    }
    const fixedForm = solveNlp(goddardProblem(N));
    expect(r.iterations).toBe(fixedForm.iterations); // presolve recovers the fixed-bound problem
    expect(raw.iterations).toBeLessThan(200);
    // The rows' multipliers come back from the reduced gradient: stationarity in h(0) holds.
    const gr = new Float64Array(q.n);
    q.gradF(r.x, gr);
    const jv = new Float64Array(q.jacRows.length);
    q.jacValues(r.x, jv);
    const res = Float64Array.from(gr);
    for (let k = 0; k < jv.length; k++) res[q.jacCols[k]] += r.lambda[q.jacRows[k]] * jv[k];
    for (const i of idx) expect(Math.abs(res[i] - r.zL[i] + r.zU[i])).toBeLessThan(1e-6);
  });
});
