/**
 * Failure modes are reports, not crashes (app/engine/solve.ts): a bad mesh, an unknown scheme
 * variant and a solver stopped at its iteration limit each come back as a SolveReport with a
 * status and a message naming the cause.
 */
import { describe, expect, it } from "vitest";
import { solveProblem } from "~/engine/solve";
import { getScheme } from "~/engine/schemes";
import { fixture } from "./helpers/fixtures";

const p = fixture("lq-scalar");

describe("failures are reports", () => {
  it("bad meshes", () => {
    const a = solveProblem(p, "trapezoidal", { intervals: 0 });
    expect(a.status).toBe("invalid_model");
    expect(a.message).toMatch(/mesh.intervals must be a positive integer/);
    const b = solveProblem(p, "euler", { intervals: 2, breakpoints: [0, 0.7, 0.5] });
    expect(b.message).toMatch(/breakpoints must/);
    const c = solveProblem(p, "lgr", { intervals: 2, degree: 0 });
    expect(c.message).toMatch(/LGR degree/);
  });
  it("unknown variant and unknown scheme id", () => {
    const r = solveProblem(p, "hermite-simpson", { intervals: 4, variant: "folded" });
    expect(r.status).toBe("invalid_model");
    expect(r.message).toMatch(/unknown variant "folded"/);
    expect(() => getScheme("simpson")).toThrow(/unknown scheme "simpson" \(known: euler, trapezoidal/);
  });
  it("invalid_model stores nothing of the starting guess as a result (no objective, final time, violation or trajectory)", () => {
    const r = solveProblem(p, "trapezoidal", { intervals: 10 }, { nlp: { maxIter: -3 } });
    expect(r.status).toBe("invalid_model");
    expect(r.message).toMatch(/maxIter/);
    expect(r.objective).toBeNull();
    expect(r.finalTime).toBeNull();
    expect(r.constraintViolation).toBeNull();
    expect(r.trajectory).toBeNull();
    // The same problem and mesh solved normally does have an objective (so the nulls above are the rule, not the case).
    expect(solveProblem(p, "trapezoidal", { intervals: 10 }).objective).not.toBeNull();
  });
  it("iteration limit", () => {
    const r = solveProblem(fixture("cops-goddard"), "trapezoidal", { intervals: 20 }, { nlp: { maxIter: 1 } });
    expect(r.status).toBe("iteration_limit");
    expect(r.iterations).toBe(1);
    expect(r.resim).toBeNull();
    expect(r.errors.objectiveAbs).toBeNull();
  });
});
