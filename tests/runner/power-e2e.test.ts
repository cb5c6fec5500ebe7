/**
 * The detection-power benchmark at a reduced size (bench/detection-power.bench.ts, real part;
 * bench/power/real-check.ts): in a temporary git repository holding a copy of the project, the
 * bench command line records a baseline and two unchanged reruns (each against the previous run),
 * then a commit plants about 50 % extra work in the Hermite–Simpson scheme only, as a code change
 * of the copy's engine (measured in-process: ×1.51–1.67 per case). The unchanged reruns must raise
 * no regression; the planted commit must be reported as ONE group finding (the scheme). Per-case
 * findings are printed, not asserted. Record on the shared 2-core machine at load average 15–20
 * (2026-12-02): with three and four problems (10–15 samples) the plant gave no group finding in
 * 2 of 2 tries; at this size the third try met these assertions, yet its second unchanged rerun
 * recorded a false group improvement (×0.72) and the planted run a false per-case regression of a
 * trapezoidal case: timing noise there is near the limit of what the rules resolve (DEVELOPERS.md,
 * detection power).
 */
import { describe, expect, it } from "vitest";
import { realCheck } from "../../bench/power/real-check";

describe("detection power, reduced end to end", () => {
  it("finds a planted 50 % one-scheme slowdown as one group finding; unchanged reruns raise nothing", { timeout: 900_000 }, async () => {
    const { runs } = await realCheck({
      scheme: "hermite-simpson",
      // The quick suite's five problems: with the CPU-time spread of a loaded 2-core machine (sd of
      // ln time ≈ 0.34 within a run, bench/detection-power.bench.ts) three or four cases of 10–15
      // samples left the scheme's pooled interval across 1 in 2 of 2 tries.
      problems: ["pika-rover-dash", "kestrel-2-ascent", "tern-orbit-raise", "ibis-crane-load-flip", "alder-ridge-cable-car"],
      schemes: ["trapezoidal", "hermite-simpson"],
      intervals: 12,
      repeats: 20,
      reruns: 2,
      fractions: [0.5],
      revert: false,
      onRun: (r) => console.log(`${r.label}: ${r.findings.map((f) => `${f.kind} ${f.direction} ${f.caseKey} ${f.detail}`).join("; ") || "nothing"} (${r.seconds.toFixed(0)} s)`),
    });
    expect(runs.map((r) => r.solved)).toEqual(runs.map(() => 10));
    for (const r of runs.filter((x) => x.label.startsWith("unchanged"))) {
      // Raising = a regression (an alert, exit code 3); an improvement is recorded, not raised.
      expect(r.findings.filter((f) => f.direction === "regression"), r.label).toEqual([]);
      expect(r.code, r.label).toBe(0);
    }
    const planted = runs.find((r) => r.label.startsWith("planted"))!;
    const groups = planted.findings.filter((f) => f.scope && f.scope !== "case" && f.direction === "regression");
    expect(groups.map((g) => g.caseKey)).toEqual(["scheme:hermite-simpson"]);
    expect(groups[0]!.ratio!).toBeGreaterThan(1.2);
    expect(groups[0]!.ciLow!).toBeGreaterThan(1);
    expect(planted.code).toBe(3);
  });
});
