/**
 * Damped Newton on small systems with known roots, and the ODEX segment integrator on the
 * harmonic oscillator (exact solution sin/cos).
 */
import { describe, expect, it } from "vitest";
import { Matrix } from "ml-matrix";
import { dampedNewton } from "~/engine/shooting/newton";
import { integrateSegment } from "~/engine/shooting/integrate";

describe("dampedNewton", () => {
  // F(x, y) = [10(y − x²), 1 − x]: the Rosenbrock system, root (1, 1) (Dennis and Schnabel,
  // Numerical Methods for Unconstrained Optimization and Nonlinear Equations, 1983, App. B).
  const F = (z: Float64Array) => Float64Array.from([10 * (z[1] - z[0] * z[0]), 1 - z[0]]);
  const J = (z: Float64Array) => new Matrix([[-20 * z[0], 10], [-1, 0]]);

  it("finds the root (1, 1) from (−1.2, 1)", () => {
    const r = dampedNewton(F, J, Float64Array.from([-1.2, 1]), { tol: 1e-14 });
    expect(r.status).toBe("converged");
    expect(Math.abs(r.z[0] - 1)).toBeLessThan(1e-14);
    expect(Math.abs(r.z[1] - 1)).toBeLessThan(1e-13);
  });

  it("backtracks out of a region where F cannot be evaluated", () => {
    // arctan has a full Newton step that overshoots from x0 = 2 (|x| grows); F is undefined for
    // x < −1.5, so the line search must shorten the step.
    const G = (z: Float64Array) => (z[0] < -1.5 ? null : Float64Array.from([Math.atan(z[0])]));
    const JG = (z: Float64Array) => new Matrix([[1 / (1 + z[0] * z[0])]]);
    const r = dampedNewton(G, JG, Float64Array.from([2]), { tol: 1e-14 });
    expect(r.status).toBe("converged");
    expect(Math.abs(r.z[0])).toBeLessThan(1e-14);
    expect(r.history.some((h) => h.alpha > 0 && h.alpha < 1)).toBe(true);
  });

  it("reports a failed first evaluation", () => {
    const r = dampedNewton(() => null, () => null, Float64Array.from([0]));
    expect(r.status).toBe("evaluation_failed");
  });
});

describe("integrateSegment", () => {
  it("integrates y'' = −y over [0, 10] to 1e-10 forwards and backwards", () => {
    const rhs = (_t: number, y: Float64Array, dy: Float64Array) => {
      dy[0] = y[1];
      dy[1] = -y[0];
      return true;
    };
    const f = integrateSegment(rhs, 0, Float64Array.from([0, 1]), 10);
    expect(f.ok).toBe(true);
    expect(Math.abs(f.y[0] - Math.sin(10))).toBeLessThan(1e-10);
    expect(Math.abs(f.y[1] - Math.cos(10))).toBeLessThan(1e-10);
    const b = integrateSegment(rhs, 10, f.y, 0);
    expect(Math.abs(b.y[0])).toBeLessThan(1e-10);
    expect(Math.abs(b.y[1] - 1)).toBeLessThan(1e-10);
  });

  it("turns a failing right-hand side into a failed result", () => {
    const r = integrateSegment((t, _y, dy) => {
      dy[0] = t > 0.5 ? NaN : 1;
      return true;
    }, 0, Float64Array.from([0]), 1);
    expect(r.ok).toBe(false);
  });
});
