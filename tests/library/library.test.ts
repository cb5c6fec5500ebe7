/**
 * The reference library itself: at least 12 problems covering the required features, each with a
 * reference objective and provenance; the analytic reference trajectories equal their closed forms
 * (tests/library/analytic.ts, derivations in each problem's description) to 1e-12.
 */
import { describe, expect, it } from "vitest";
import { loadLibrary } from "~/engine/problem/load";
import { ANALYTIC_CASES } from "./analytic";

const lib = loadLibrary("problems");

describe("reference library", () => {
  it("loads at least 12 problems without errors", () => {
    expect(lib.errors).toEqual([]);
    expect(lib.problems.length).toBeGreaterThanOrEqual(12);
  });

  it("covers the required features", () => {
    const tagged = (t: string) => lib.problems.filter((p) => p.tags.includes(t)).map((p) => p.id);
    for (const t of ["analytic", "bang-bang", "singular-arc", "state-constrained", "free-final-time", "orbit-transfer", "hard-start"])
      expect(tagged(t).length, t).toBeGreaterThan(0);
    expect(lib.problems.some((p) => p.nx >= 6)).toBe(true);
    expect(lib.problems.some((p) => p.nu >= 2)).toBe(true);
    // the ascent problem with drag and a dynamic-pressure limit shows bang, boundary and singular arcs
    const k = lib.problems.find((p) => p.id === "kestrel-2-ascent")!;
    expect(k.pathInfo.map((c) => c.name)).toContain("q");
    expect(k.reference.arcs).toEqual(["upper", "boundary:q", "singular", "lower"]);
  });

  it("Kestrel-2: the fine-mesh reference shows full thrust, a q-boundary arc, a singular arc and a coast, in order", () => {
    const k = lib.problems.find((p) => p.id === "kestrel-2-ascent")!;
    const tr = k.reference.trajectory!;
    const { Tmax, Hc, qmax } = k.constants;
    const arcOf = (i: number): string => {
      const T = tr.columns.T[i], h = tr.columns.h[i], v = tr.columns.v[i];
      const q = 0.5 * v * v * Math.exp(-Hc * (h - 1));
      // thresholds leave room for the ringing of the LGR control interpolant at switches (±0.15)
      if (T > Tmax - 0.05) return "upper";
      if (T < 0.15) return "lower";
      const interior = T > 0.5 && T < Tmax - 0.5;
      if (interior && Math.abs(q / qmax - 1) < 1e-3) return "boundary:q";
      return interior && q / qmax < 0.97 ? "singular" : "transition";
    };
    const seq: string[] = [];
    for (let i = 0; i < tr.t.length; i++) {
      const a = arcOf(i);
      if (a !== "transition" && seq[seq.length - 1] !== a) seq.push(a);
    }
    expect(seq).toEqual(["upper", "boundary:q", "singular", "lower"]);
  });

  it("every problem has a reference objective, a trajectory and provenance", () => {
    for (const p of lib.problems) {
      const r = p.reference;
      expect(r.objective, p.id).toBeDefined();
      expect(r.objective!.tolerance).toBeGreaterThan(0);
      expect(["analytic", "published", "fine-mesh", "shooting"]).toContain(r.objective!.provenance.kind);
      if (r.objective!.provenance.kind === "fine-mesh") expect(r.objective!.provenance.detail).toMatch(/LGR \d+x\d+/);
      expect(r.trajectory, p.id).toBeDefined();
      if (p.horizon.kind === "free") expect(r.finalTime, p.id).toBeDefined();
      expect(p.description.length).toBeGreaterThan(100);
    }
  });

  for (const c of ANALYTIC_CASES) {
    it(`${c.id}: reference.csv equals the closed form (1e-12)`, () => {
      const p = lib.problems.find((q) => q.id === c.id)!;
      const tr = p.reference.trajectory!;
      expect(tr.provenance.kind).toBe("analytic");
      for (let k = 0; k < tr.t.length; k++) {
        const v = c.at(tr.t[k]);
        c.columns.forEach((name, j) => expect(Math.abs(tr.columns[name][k] - v[j])).toBeLessThan(1e-12 * Math.max(1, Math.abs(v[j]))));
      }
      // the closed form attains the reference objective where it is a plain integral
      if (c.id === "dunlin-rail-shuttle" || c.id === "osprey-tug-standoff") {
        // ∫ ½u² by composite Simpson on 20 000 panels (exact to ~1e-12 for these piecewise polynomials)
        const n = 20000, h = (c.tf - c.t0) / n;
        const ui = c.columns.indexOf("u");
        let s = 0;
        for (let i = 0; i <= n; i++) s += (i === 0 || i === n ? 1 : i % 2 ? 4 : 2) * 0.5 * c.at(c.t0 + i * h)[ui] ** 2;
        expect(Math.abs((s * h) / 3 - p.reference.objective!.value)).toBeLessThan(1e-9);
      }
    });
  }
});
