/**
 * The detection-power benchmark at a reduced size (bench/detection-power.bench.ts, real part;
 * bench/power/real-check.ts), through the path a CI runner takes: `bench --confirm`. In a temporary
 * git repository holding a copy of the project, the bench command line records a baseline and two
 * unchanged reruns (each against the previous run), then a commit plants about 50 % extra work in
 * the Hermite–Simpson scheme only, as a code change of the copy's engine (measured in-process:
 * ×1.51–1.67 per case). Sequential runs on a shared 2-core machine move single cases by ×1.4–1.7
 * with p < 0.001 (seen in CI, 2026-12-02: two unchanged-rerun cases at ×1.44 and ×1.75), so a
 * per-case finding of an unchanged rerun is expected now and then and is printed, not asserted;
 * what is asserted is the verdict after the interleaved A/B that `--confirm` runs at once: no
 * regression stands for unchanged code (exit 0), and the planted commit is ONE group finding (the
 * scheme) that the A/B confirms (exit 3). Also seen in that CI run: the planted slowdown's case
 * findings folded into the unchanged reruns' cleared regressions of the same cases, so only one
 * case was put to the A/B, whose ×1.347 [0.986, 1.795] was read as "cleared". A cleared regression
 * no longer absorbs later sightings, and such an interval is now "not decided". The group finding
 * may come from the run's own rule or from `--confirm`'s screening (seen in CI 2026-12-02: a slow
 * unchanged rerun as baseline hid the plant from the rule; screening found it, ×1.302 [1.003,
 * 1.616]); both are in the command's `findings`.
 */
import { describe, expect, it } from "vitest";
import { realCheck } from "../../bench/power/real-check";

describe("detection power, reduced end to end, A/B-confirmed", () => {
  it("confirms a planted 50 % one-scheme slowdown found as one group finding; unchanged reruns leave nothing standing", { timeout: 1_800_000 }, async () => {
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
      confirm: true,
      // The quick suite's rules, but screening only schemes that moved past ×1.05 and capping the A/B
      // at 24 blocks: the quick gate (every scheme, up to 60 blocks) costs several minutes of A/B per
      // run, four runs here; a 50 % plant is decided in 6–12 blocks, and the gate's power at 10 % and
      // its false alarms are bench/detection-power.bench.ts's to measure.
      thresholds: { screenSpeedRatio: 1.05, confirmMaxBlocks: 24 },
      onRun: (r) =>
        console.log(
          `${r.label}: ${r.findings.map((f) => `${f.kind} ${f.direction} ${f.caseKey} ${f.detail}`).join("; ") || "nothing"}${r.confirmation ? ` · A/B ${r.confirmation.state}: ${r.confirmation.note}` : ""} · standing ${r.standing}, exit ${r.code} (${r.seconds.toFixed(0)} s)`,
        ),
    });
    expect(runs.map((r) => r.solved)).toEqual(runs.map(() => 10));
    for (const r of runs.filter((x) => x.label.startsWith("unchanged"))) {
      // A speed finding of an unchanged rerun must be cleared by the A/B; nothing else may be raised.
      const speed = r.findings.filter((f) => f.direction === "regression" && f.kind === "speed");
      expect(r.findings.filter((f) => f.direction === "regression" && f.kind !== "speed"), r.label).toEqual([]);
      // Cleared, or not decided (an interval too wide to clear, which stays open but does not fail the run).
      if (speed.length) expect(["cleared", "unavailable"], r.label).toContain(r.confirmation?.state);
      expect(r.standing, r.label).toBe(0);
      expect(r.code, r.label).toBe(0);
    }
    const planted = runs.find((r) => r.label.startsWith("planted"))!;
    const groups = planted.findings.filter((f) => f.scope && f.scope !== "case" && f.direction === "regression");
    expect(groups.map((g) => g.caseKey)).toEqual(["scheme:hermite-simpson"]);
    // A rule finding estimates ×1.4–1.8 sequentially; a screened one carries the A/B ratio (×1.30–1.36 seen).
    expect(groups[0]!.ratio!).toBeGreaterThan(1.15);
    expect(groups[0]!.ciLow!).toBeGreaterThan(1);
    expect(planted.confirmation?.state).toBe("confirmed");
    expect(planted.standing).toBeGreaterThan(0);
    expect(planted.code).toBe(3);
  });
});
