/**
 * Compiled values, Jacobians and Hessians of random smooth expressions against outside
 * references: values against mathjs' own evaluate(); first derivatives against central finite
 * differences of the values; the weighted Hessian against central differences of the compiled
 * Jacobian. Sparsity: every structurally absent entry must have a zero finite difference.
 *
 * Central difference D(h) = (f(x + h e_j) − f(x − h e_j)) / (2h), truncation error O(h²),
 * rounding error O(ε|f|/h) (common practice, no source); h = 1e-5·(1 + |x_j|). Where third
 * derivatives are large (sin((2πx)²)...) the truncation error is estimated by Richardson's
 * argument: D(h) − f′ ≈ (D(2h) − D(h))/3. Tolerance:
 *   |D(h) − exact| ≤ 1e-6·(1 + |exact| + max|f|) + |D(2h) − D(h)|.
 * More cases: DERIV_RUNS=20000 npx vitest run tests/expr/derivatives.test.ts
 */
import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { evaluate } from "mathjs";
import { compilePointFunction, inputResolver, toDag } from "~/engine/expr/compile";
import { Dag } from "~/engine/expr/dag";
import { parseExpression } from "~/engine/expr/validate";
import { INPUT_NAMES, N_INPUTS, point, smoothExpression } from "./gen";

const scope = { names: new Set(INPUT_NAMES) };

function compileAll(texts: string[]) {
  const nodes = texts.map((t) => {
    const r = parseExpression(t, scope);
    expect(r.issues, t).toEqual([]);
    return r.node!;
  });
  return compilePointFunction(nodes, INPUT_NAMES, {});
}

function mathjsValue(text: string, z: number[]): number {
  const sc: Record<string, number> = {};
  INPUT_NAMES.forEach((n, j) => (sc[n] = z[j]));
  return evaluate(text, sc) as number;
}

/**
 * Nested powers of constants can overflow (3^729 = ∞), and then ∞ − ∞ = NaN in a difference:
 * such draws are skipped (fc.pre), as are values beyond 1e100 where differences lose all digits.
 */
function finiteAndModerate(v: ArrayLike<number>): boolean {
  for (let i = 0; i < v.length; i++) if (!(Math.abs(v[i]) < 1e100)) return false;
  return true;
}

const tol = (exact: number, mag: number, richardson: number) => 1e-6 * (1 + Math.abs(exact) + mag) + Math.abs(richardson);

describe("compiled point functions vs outside references", () => {
  it("values agree with mathjs evaluate()", () => {
    fc.assert(
      fc.property(fc.array(smoothExpression, { minLength: 1, maxLength: 3 }), point, (texts, z) => {
        const f = compileAll(texts);
        const out = new Float64Array(f.nOut);
        f.eval(Float64Array.from(z), out);
        fc.pre(finiteAndModerate(out));
        // the DAG interpreter agrees with the generated code; tolerance 1e-10 relative (as above): they differ
        // only where codegen writes powers as products (x^2 → x·x, x^0.5 → √x)
        const dag = new Dag();
        const roots = texts.map((t) => toDag(dag, parseExpression(t, scope).node!, inputResolver(dag, INPUT_NAMES, {})));
        dag.evaluate(roots, z).forEach((v, i) => expect(Math.abs(v - out[i])).toBeLessThanOrEqual(1e-10 * (1 + Math.abs(v))));
        texts.forEach((t, i) => {
          const ref = mathjsValue(t, z);
          // tolerance 1e-10 relative: only evaluation order differs (constant folding, x^2 → x·x)
          expect(Math.abs(out[i] - ref)).toBeLessThanOrEqual(1e-10 * (1 + Math.abs(ref)));
        });
      }),
      { numRuns: Number(process.env.DERIV_RUNS ?? 500) },
    );
  });

  it("Jacobian agrees with central differences, including the sparsity pattern", () => {
    fc.assert(
      fc.property(fc.array(smoothExpression, { minLength: 1, maxLength: 3 }), point, (texts, z0) => {
        const f = compileAll(texts);
        const z = Float64Array.from(z0);
        const f0 = new Float64Array(f.nOut);
        f.eval(z, f0);
        fc.pre(finiteAndModerate(f0));
        const mag = Math.max(...f0.map(Math.abs));
        const jac = new Float64Array(f.jacRows.length);
        f.jac(z, jac);
        const dense: number[][] = Array.from({ length: f.nOut }, () => new Array(N_INPUTS).fill(0));
        f.jacRows.forEach((r, k) => (dense[r][f.jacCols[k]] = jac[k]));
        const central = (j: number, h: number): Float64Array => {
          const fp = new Float64Array(f.nOut);
          const fm = new Float64Array(f.nOut);
          const zp = Float64Array.from(z);
          const zm = Float64Array.from(z);
          zp[j] += h;
          zm[j] -= h;
          f.eval(zp, fp);
          f.eval(zm, fm);
          return fp.map((v, i) => (v - fm[i]) / (2 * h));
        };
        for (let j = 0; j < N_INPUTS; j++) {
          const h = 1e-5 * (1 + Math.abs(z[j]));
          const d1 = central(j, h);
          const d2 = central(j, 2 * h);
          fc.pre(finiteAndModerate(d1) && finiteAndModerate(d2));
          for (let i = 0; i < f.nOut; i++) {
            expect(Math.abs(d1[i] - dense[i][j]), `d out${i}/d x${j} of ${texts[i]}`).toBeLessThanOrEqual(tol(dense[i][j], mag, d2[i] - d1[i]));
          }
        }
        // no duplicate structural entries
        const keys = new Set(Array.from(f.jacRows, (r, k) => `${r},${f.jacCols[k]}`));
        expect(keys.size).toBe(f.jacRows.length);
      }),
      { numRuns: Number(process.env.DERIV_RUNS ?? 500) },
    );
  });

  it("weighted Hessian (lower triangle) agrees with central differences of the Jacobian", () => {
    fc.assert(
      fc.property(
        fc.array(smoothExpression, { minLength: 1, maxLength: 3 }),
        point,
        fc.array(fc.double({ min: -2, max: 2, noNaN: true }), { minLength: 3, maxLength: 3 }),
        (texts, z0, w0) => {
          const f = compileAll(texts);
          const z = Float64Array.from(z0);
          const w = Float64Array.from(w0.slice(0, f.nOut));
          const hv = new Float64Array(f.hessRows.length);
          f.hess(z, w, hv);
          const H: number[][] = Array.from({ length: N_INPUTS }, () => new Array(N_INPUTS).fill(0));
          f.hessRows.forEach((r, k) => {
            expect(r).toBeGreaterThanOrEqual(f.hessCols[k]);
            H[r][f.hessCols[k]] = hv[k];
            H[f.hessCols[k]][r] = hv[k];
          });
          // gradient of Σ w_i f_i from the compiled Jacobian
          const grad = (zz: Float64Array) => {
            const jv = new Float64Array(f.jacRows.length);
            f.jac(zz, jv);
            const g = new Array(N_INPUTS).fill(0);
            f.jacRows.forEach((r, k) => (g[f.jacCols[k]] += w[r] * jv[k]));
            return g;
          };
          const g0 = grad(z);
          fc.pre(finiteAndModerate(g0));
          const mag = Math.max(1, ...g0.map(Math.abs));
          const central = (c: number, h: number): number[] => {
            const zp = Float64Array.from(z);
            const zm = Float64Array.from(z);
            zp[c] += h;
            zm[c] -= h;
            const gp = grad(zp);
            const gm = grad(zm);
            return gp.map((v, r) => (v - gm[r]) / (2 * h));
          };
          for (let c = 0; c < N_INPUTS; c++) {
            const h = 1e-5 * (1 + Math.abs(z[c]));
            const d1 = central(c, h);
            const d2 = central(c, 2 * h);
            fc.pre(finiteAndModerate(d1) && finiteAndModerate(d2));
            for (let r = 0; r < N_INPUTS; r++) {
              expect(Math.abs(d1[r] - H[r][c]), `H[${r}][${c}] of ${texts.join(" | ")}`).toBeLessThanOrEqual(tol(H[r][c], mag, d2[r] - d1[r]));
            }
          }
        },
      ),
      { numRuns: Number(process.env.DERIV_RUNS ?? 500) },
    );
  });
});
