/**
 * Issue 17 item 3: a refinement whose Newton stalls from the requested seed falls back on a finer
 * seed (then another scheme) by itself and says so. Case: Goddard rocket, COPS normalisation, from
 * explicit Euler at 15 intervals: the coarse seed misses the initial full-thrust arc (detected
 * singular|lower) and Newton's line search fails; from Euler at 30 intervals the structure
 * upper|singular|lower is detected and refined. Outside value: final height 1.01283 (Dolan, Moré
 * and Munson, Benchmarking optimization software with COPS 3.0, ANL/MCS-TM-273, 2004; recalled
 * from memory, as in tests/shooting/classic.test.ts), tolerance 1e-5.
 */
import { describe, expect, it } from "vitest";
import { loadProblem } from "~/engine/problem/load";
import { refineProblem } from "~/engine/shooting/refine-problem";

const loaded = loadProblem("tests/fixtures/classic/goddard-cops");
if (!loaded.ok) throw new Error("goddard-cops does not load");
const p = loaded.problem;

describe("refinement falls back on another seed", () => {
  it("from Euler at 15 intervals: not converged without retries", () => {
    const r = refineProblem(p, { scheme: "euler", intervals: 15, retry: false });
    expect(r.converged).toBe(false);
    expect(r.reference).toBeNull();
  });

  it("from Euler at 15 intervals: converges from the finer seed and says so", () => {
    const r = refineProblem(p, { scheme: "euler", intervals: 15 });
    expect(r.status, r.attempts.join("\n")).toBe("converged");
    expect(r.message).toMatch(/seeded from euler at 30 intervals after \w+ from euler at 15 intervals/);
    expect(r.attempts[0]).toMatch(/^seed euler at 15 intervals: .*(line_search_failed|iteration_limit|singular_jacobian)/);
    expect(r.attempts[r.attempts.length - 1]).toMatch(/^seed euler at 30 intervals: .*converged.*Jacobian condition/);
    expect(r.provenance).toMatchObject({ kind: "shooting", detail: "refined by shooting from euler at 30 intervals" });
    expect(r.signature).toBe("upper|singular|lower");
    expect(Math.abs(r.objective - 1.01283)).toBeLessThan(1e-5);
    expect(Number.isFinite(r.jacobianCondition)).toBe(true);
  });
});
