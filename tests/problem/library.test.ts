/** Every problem in problems/ loads without error (whatever the library holds right now). */
import { describe, expect, it } from "vitest";
import { loadLibrary } from "~/engine/problem/load";
import { formatProblemError } from "~/engine/problem/errors";
import katex from "katex";

describe("problem library", () => {
  it("every folder in problems/ validates and compiles", () => {
    const { problems, errors } = loadLibrary("problems");
    expect(errors.map(formatProblemError)).toEqual([]);
    expect(problems.length).toBeGreaterThanOrEqual(1);
    for (const p of problems) {
      expect(p.dynamics.nIn).toBe(1 + p.nx + p.nu);
      expect(p.dynamics.nOut).toBe(p.nx);
      expect(p.endpoint.nIn).toBe(2 + 2 * p.nx);
      expect(p.endpointInfo.length).toBe(p.endpoint.nOut);
      expect(p.pathInfo.length).toBe(p.path.nOut);
      expect(p.versionHash).toMatch(/^[0-9a-f]{64}$/);
      // every compiled function evaluates to finite numbers at the guess' midpoint
      const g = new Float64Array(p.nx + p.nu);
      p.guess.at(0.5, g);
      const t = p.horizon.t0 + 0.5 * (p.guess.tf - p.horizon.t0);
      const z = Float64Array.of(t, ...g);
      const out = new Float64Array(p.nx);
      p.dynamics.eval(z, out);
      expect(Array.from(out).every(Number.isFinite), `${p.id} dynamics at the guess`).toBe(true);
      // every expression has TeX, and KaTeX accepts it
      expect(Object.keys(p.symbolic.tex)).toEqual(expect.arrayContaining(p.states.map((s) => `dynamics.${s.name}`)));
      for (const [key, tex] of Object.entries(p.symbolic.tex)) {
        expect(() => katex.renderToString(tex, { throwOnError: true }), `${p.id} ${key}: ${tex}`).not.toThrow();
      }
    }
  });

  it("a second load comes from the cache (same objects)", () => {
    const a = loadLibrary("problems").problems;
    const b = loadLibrary("problems").problems;
    expect(b.map((p) => p.versionHash)).toEqual(a.map((p) => p.versionHash));
    a.forEach((p, k) => expect(b[k]).toBe(p));
  });
});
