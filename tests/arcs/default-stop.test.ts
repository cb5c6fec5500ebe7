/**
 * Arc detection under the default stop (duality-gap test on, app/engine/nlp/gap.ts): driving the
 * barrier down moves controls onto their bounds and changes the multipliers, and the detected
 * structures must not depend on it (issue 17, item 1).
 *
 * Goddard (COPS form) with the speed limit v ≤ 0.1, tests/fixtures/classic/goddard-cops-speed-limit:
 * the optimum is upper|singular|boundary:v|lower (the refined J = 1.012576324657 with entry
 * 0.0597374, tests/shooting/classic.test.ts; the problem is the COPS Goddard rocket of Dolan, Moré
 * and Munson, ANL/MCS-TM-273, 2004, with our own speed limit, as the fixture describes). Under the
 * former stop the RK4-shooting solution at 240 intervals stayed 1.3e-5 below the limit and the
 * boundary arc was lost (measured in the issue).
 */
import { describe, expect, it } from "vitest";
import { loadProblem } from "~/engine/problem/load";
import { directSolve } from "~/engine/shooting/direct";
import { detectArcs } from "~/engine/arcs";
import type { SchemeId } from "~/engine/schemes/types";

function goddardLimit() {
  const r = loadProblem("tests/fixtures/classic/goddard-cops-speed-limit");
  if (!r.ok) throw new Error(r.errors.map((e) => e.message).join("; "));
  return r.problem;
}

describe("arc structure under the default duality-gap stop", () => {
  it("Goddard v ≤ 0.1, RK4 shooting at 240 intervals: the speed reaches the limit and the boundary arc is found", () => {
    const p = goddardLimit();
    const d = directSolve(p, "rk4-shooting", { intervals: 240 });
    expect(d.status).toBe("optimal");
    const v = d.solution!.states[p.states.findIndex((s) => s.name === "v")];
    expect(0.1 - Math.max(...v)).toBeLessThan(1e-8);
    expect(detectArcs(p, d.solution!).signature).toBe("upper|singular|boundary:v|lower");
  });
  for (const [scheme, N] of [["hermite-simpson", 60], ["trapezoidal", 60]] as [SchemeId, number][]) {
    it(`Goddard v ≤ 0.1, ${scheme} at ${N} intervals: the same structure with and without the gap test`, () => {
      const p = goddardLimit();
      const now = directSolve(p, scheme, { intervals: N });
      const former = directSolve(p, scheme, { intervals: N }, { gapTol: 0 });
      expect(detectArcs(p, now.solution!).signature).toBe("upper|singular|boundary:v|lower");
      expect(detectArcs(p, former.solution!).signature).toBe("upper|singular|boundary:v|lower");
    });
  }
});
