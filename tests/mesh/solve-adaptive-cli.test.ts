/**
 * `solve --mesh adaptive --tolerance ε` end to end (bench/solve.ts → app/engine/mesh/adaptive.ts):
 * the JSON report carries the refinement record (meshes, the largest estimate per pass, totals) and
 * the exit status says whether ε was met; a missing tolerance is refused with exit 2.
 */
import { describe, expect, it } from "vitest";
import { spawnSync } from "node:child_process";

const run = (...args: string[]) => spawnSync(process.execPath, ["--import", "tsx", "bench/solve.ts", ...args], { encoding: "utf8", timeout: 120_000 });

describe("solve --mesh adaptive", () => {
  it("refines pika-rover-dash with trapezoidal to ε = 1e-5 and reports every pass", () => {
    const r = run("pika-rover-dash", "--scheme", "trapezoidal", "--intervals", "15", "--mesh", "adaptive", "--tolerance", "1e-5", "--json", "--no-resim");
    expect(r.status).toBe(0);
    const rep = JSON.parse(r.stdout.trim());
    const ref = rep.refinement;
    expect(ref.met).toBe(true);
    expect(ref.stop).toBe("met");
    expect(ref.passes.length).toBeGreaterThan(1);
    expect(ref.passes[0].intervals).toBe(15);
    const last = ref.passes[ref.passes.length - 1];
    expect(last.maxEstimate).toBeLessThanOrEqual(1e-5);
    expect(rep.intervals).toBe(last.intervals);
    expect(rep.meshEstimate.max).toBeCloseTo(last.maxEstimate, 12);
    expect(ref.totalIterations).toBe(ref.passes.reduce((a: number, p: { iterations: number }) => a + p.iterations, 0));
    // progress on stderr, one line per pass
    expect(r.stderr.match(/pass\s+\d+/g)?.length).toBe(ref.passes.length);
  });
  it("--mesh adaptive without --tolerance exits 2 naming the flag", () => {
    const r = run("pika-rover-dash", "--scheme", "trapezoidal", "--mesh", "adaptive");
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--tolerance \(the mesh error tolerance\) is required/);
    const s = run("pika-rover-dash", "--scheme", "trapezoidal", "--mesh", "fine");
    expect(s.status).toBe(2);
    expect(s.stderr).toMatch(/--mesh: expected uniform or adaptive, got "fine"/);
  });
});
