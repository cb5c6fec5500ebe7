/**
 * Arc detection on the library problems that state their expected arc sequence
 * (`reference.arcs` in problems/<id>/problem.json, written by the problem authors from their
 * analysis of each problem): every scheme at the problem's default mesh must give that sequence.
 * Problems without `reference.arcs` are not checked here.
 * Labels are the vocabulary of app/engine/arcs/types.ts.
 */
import { describe, expect, it } from "vitest";
import { loadLibrary } from "~/engine/problem/load";
import { SCHEME_IDS } from "~/engine/schemes/index";
import { directSolve } from "~/engine/shooting/direct";
import { detectArcs } from "~/engine/arcs";

const { problems } = loadLibrary("problems");
const withArcs = problems.filter((p) => p.reference.arcs && p.reference.arcs.length > 0);

describe("arc detection on the library", () => {
  it("has problems with expected sequences", () => {
    expect(withArcs.length).toBeGreaterThan(0);
  });
  for (const p of withArcs) {
    const expected = p.reference.arcs!.join("|");
    for (const scheme of SCHEME_IDS) {
      it(`${p.id} with ${scheme}: ${expected}`, () => {
        const mesh = { intervals: p.defaults?.intervals ?? 40, degree: scheme === "lgr" ? p.defaults?.degree : undefined };
        const d = directSolve(p, scheme, mesh);
        expect(d.solution, `${d.status}: ${d.message}`).not.toBeNull();
        expect(detectArcs(p, d.solution!).signature).toBe(expected);
      });
    }
  }
});
