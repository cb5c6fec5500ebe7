/**
 * Is the objective error monotone in the mesh? Every library problem × scheme, with the former stop
 * (no duality-gap test, gapTol = 0) and the default stop (gapTol 1e-11, app/engine/nlp/gap.ts)
 * solved one after the other for each cell (interleaved, so machine load hits both alike).
 *
 *   npx tsx bench/mesh-monotonicity.bench.ts
 *     env: SCHEMES=euler,trapezoidal,hermite-simpson,lgr,rk4-shooting  NS=30,60,120,240
 *          ONLY=<id part>  FINE=960 (also print |J_N − J_fine| / |J_fine| of the default stop, the
 *          discretisation error measured against a much finer mesh instead of the reference)
 *
 * Prints one markdown row per problem × scheme: relative objective error at each N (former → now),
 * iterations (former → now), whether the new errors fall with the mesh until the floor, and the
 * largest solver share (duality gap ÷ |J|). The floor is max(1e-10, reference tolerance ÷ |J|):
 * a reference known to 1e-7 cannot show a smaller error. Totals: iterations per scheme and overall
 * with their ratio, and CPU seconds (process.cpuUsage, user + system: this machine is shared, wall
 * time is not a measure) with their ratio. Non-monotone cells are listed at the end.
 */
import { loadLibrary } from "../app/engine/problem/load";
import { solveProblem } from "../app/engine/solve";
import type { SchemeId } from "../app/engine/schemes/types";

const lib = loadLibrary("problems");
const schemes = (process.env.SCHEMES ?? "euler,trapezoidal,hermite-simpson,lgr,rk4-shooting").split(",") as SchemeId[];
const Ns = (process.env.NS ?? "30,60,120,240").split(",").map(Number);
const only = process.env.ONLY;
const fine = process.env.FINE ? Number(process.env.FINE) : 0;

const cpu = () => {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1e6;
};
/** Error, with the status appended when the solve did not end "optimal" (e.g. "4.9e-7 acceptable"). */
const fmt = (e: number | null, status: string) => (e === null ? status : `${e.toExponential(1)}${status === "optimal" ? "" : ` ${status}`}`);

type Tot = { itOld: number; itNew: number; cpuOld: number; cpuNew: number };
const totals = new Map<string, Tot>();
const bad: string[] = [];
console.log(`objective error (relative) former stop → default stop, N = ${Ns.join(" / ")}${fine ? `; Δfine = |J_N − J_${fine}|/|J_${fine}| (default stop)` : ""}`);
console.log(`| problem | scheme | ${Ns.map((N) => `N=${N}`).join(" | ")} | iterations | monotone | max solver share |${fine ? " Δfine |" : ""}`);
console.log(`|---|---|${Ns.map(() => "---|").join("")}---|---|---|${fine ? "---|" : ""}`);
for (const p of lib.problems) {
  if (only && !p.id.includes(only)) continue;
  const ref = p.reference.objective;
  const floor = ref ? Math.max(1e-10, ref.tolerance / Math.max(1e-300, Math.abs(ref.value))) : 1e-10;
  for (const s of schemes) {
    const tot = totals.get(s) ?? { itOld: 0, itNew: 0, cpuOld: 0, cpuNew: 0 };
    const cells: string[] = [];
    const errs: (number | null)[] = [];
    const objs: (number | null)[] = [];
    let itO = 0, itN = 0, share = 0;
    for (const N of Ns) {
      const run = (gapTol?: number) => {
        const c0 = cpu();
        const r = solveProblem(p, s, { intervals: N, degree: p.defaults?.degree }, {
          keepTrajectory: false, resimulate: false, arcs: false, nlp: { maxIter: 400, ...(gapTol === undefined ? {} : { gapTol }) },
        });
        return { r, c: cpu() - c0 };
      };
      const o = run(0);
      const n = run();
      tot.itOld += o.r.iterations; tot.itNew += n.r.iterations; tot.cpuOld += o.c; tot.cpuNew += n.c;
      itO += o.r.iterations; itN += n.r.iterations;
      if (n.r.errorSplit.solver !== null && n.r.objective) share = Math.max(share, n.r.errorSplit.solver / Math.abs(n.r.objective));
      cells.push(`${fmt(o.r.errors.objectiveRel, o.r.status)} → ${fmt(n.r.errors.objectiveRel, n.r.status)}`);
      errs.push(n.r.status === "optimal" ? n.r.errors.objectiveRel : null);
      objs.push(n.r.status === "optimal" ? n.r.objective : null);
    }
    totals.set(s, tot);
    // Monotone: each error below the previous unless both are under the floor; a failed solve is not.
    let mono = errs.every((e) => e !== null);
    for (let k = 1; mono && k < errs.length; k++) if ((errs[k - 1]! > floor || errs[k]! > floor) && !(errs[k]! < errs[k - 1]!)) mono = false;
    let dfine = "";
    if (fine) {
      const rf = solveProblem(p, s, { intervals: fine, degree: p.defaults?.degree }, { keepTrajectory: false, resimulate: false, arcs: false, nlp: { maxIter: 400 } });
      dfine = objs.map((J) => (J === null || rf.objective === null ? "-" : (Math.abs(J - rf.objective) / Math.abs(rf.objective)).toExponential(1))).join(" / ");
    }
    if (!mono) bad.push(`${p.id} ${s}: ${cells.map((c) => c.split(" → ")[1]).join(" / ")} (floor ${floor.toExponential(0)})${fine ? `; Δfine ${dfine}` : ""}`);
    console.log(`| ${p.id} | ${s} | ${cells.join(" | ")} | ${itO} → ${itN} | ${mono ? "yes" : "**no**"} | ${share.toExponential(0)} |${fine ? ` ${dfine} |` : ""}`);
  }
}
console.log("\n| scheme | iterations former → default | ratio | CPU s former → default | ratio |\n|---|---|---|---|---|");
const all: Tot = { itOld: 0, itNew: 0, cpuOld: 0, cpuNew: 0 };
for (const [s, t] of totals) {
  all.itOld += t.itOld; all.itNew += t.itNew; all.cpuOld += t.cpuOld; all.cpuNew += t.cpuNew;
  console.log(`| ${s} | ${t.itOld} → ${t.itNew} | ${(t.itNew / t.itOld).toFixed(3)} | ${t.cpuOld.toFixed(1)} → ${t.cpuNew.toFixed(1)} | ${(t.cpuNew / t.cpuOld).toFixed(2)} |`);
}
console.log(`| all | ${all.itOld} → ${all.itNew} | ${(all.itNew / all.itOld).toFixed(3)} | ${all.cpuOld.toFixed(1)} → ${all.cpuNew.toFixed(1)} | ${(all.cpuNew / all.cpuOld).toFixed(2)} |`);
console.log(`\nnot monotone to the floor with the default stop: ${bad.length}`);
for (const b of bad) console.log(`  ${b}`);
