/**
 * Compiled problem functions against the same functions written by hand (issue 3).
 * Run: npx tsx bench/compile.bench.ts [--quick]
 *
 * Model: the Plover-1 vertical ascent fixture (tests/fixtures/problems/plover-ascent), three
 * states (h, v, m) and one control T:
 *   ḣ = v,  v̇ = (T − D)/m − g0,  ṁ = −T/c,  D = ½ ρ0 e^(−h/H) v² CdA tanh(v/10),  c = Isp g0.
 * Each task evaluates the dynamics and their sparse Jacobian (6 nonzeros) at P points, as a
 * transcription does at its collocation points; the hand-written version computes the same
 * values in the same triplet order with shared subexpressions, on the same buffers.
 *
 * Prints the mean time per point of each, the ratio compiled / hand-written (goal: < 2), the
 * same for the weighted Hessian, and the time to compile the problem file.
 */
import { Bench } from "tinybench";
import { loadProblem, clearProblemCache } from "../app/engine/problem/load";
import { formatProblemError } from "../app/engine/problem/errors";

const quick = process.argv.includes("--quick");
const P = 1000;

const loaded = loadProblem("tests/fixtures/problems/plover-ascent");
if (!loaded.ok) throw new Error(loaded.errors.map(formatProblemError).join("\n"));
const problem = loaded.problem;
const f = problem.dynamics;

const g0 = 9.80665, rho0 = 1.225, H = 7200, CdA = 0.042, c = 215 * 9.80665;

/** ẋ = f(t, x, u) by hand; z = [t, h, v, m, T]. */
function dynamicsByHand(z: Float64Array, out: Float64Array): void {
  const h = z[1], v = z[2], m = z[3], T = z[4];
  const D = 0.5 * rho0 * Math.exp(-h / H) * v * v * CdA * Math.tanh(v / 10);
  out[0] = v;
  out[1] = (T - D) / m - g0;
  out[2] = -T / c;
}

/**
 * Jacobian by hand in the compiled triplet order (0,2) (1,1) (1,2) (1,3) (1,4) (2,4):
 *   ∂v̇/∂h = D/(H m),  ∂v̇/∂v = −(∂D/∂v)/m with ∂D/∂v = ½ρ0 e^(−h/H) CdA (2v tanh(v/10) + v² sech²(v/10)/10),
 *   ∂v̇/∂m = −(T − D)/m²,  ∂v̇/∂T = 1/m,  ∂ṁ/∂T = −1/c.
 */
function jacobianByHand(z: Float64Array, out: Float64Array): void {
  const h = z[1], v = z[2], m = z[3], T = z[4];
  const k = 0.5 * rho0 * Math.exp(-h / H) * CdA;
  const th = Math.tanh(v / 10);
  const D = k * v * v * th;
  const dDdv = k * (2 * v * th + (v * v * (1 - th * th)) / 10);
  out[0] = 1;
  out[1] = D / (H * m);
  out[2] = -dDdv / m;
  out[3] = -(T - D) / (m * m);
  out[4] = 1 / m;
  out[5] = -1 / c;
}

/** Lower-triangle Hessian of w1·v̇ (ḣ and ṁ are linear) in the compiled order. */
function hessianByHand(z: Float64Array, w: Float64Array, out: Float64Array): void {
  const h = z[1], v = z[2], m = z[3], T = z[4];
  const k = 0.5 * rho0 * Math.exp(-h / H) * CdA;
  const th = Math.tanh(v / 10);
  const s2 = 1 - th * th;
  const D = k * v * v * th;
  const dDdv = k * (2 * v * th + (v * v * s2) / 10);
  const d2Ddv2 = k * (2 * th + (4 * v * s2) / 10 - (2 * v * v * th * s2) / 100);
  const w1 = w[1];
  const im = 1 / m;
  // pattern (h,h) (v,h) (v,v) (m,h) (m,v) (m,m) (T,m)
  out[0] = w1 * (-D / (H * H)) * im;
  out[1] = w1 * (dDdv / H) * im;
  out[2] = w1 * -d2Ddv2 * im;
  out[3] = w1 * (-D / H) * im * im;
  out[4] = w1 * dDdv * im * im;
  out[5] = w1 * 2 * (T - D) * im * im * im;
  out[6] = w1 * -im * im;
}

// P points across the flight envelope (deterministic)
const points: Float64Array[] = [];
for (let p = 0; p < P; p++) {
  const s = (p + 0.5) / P;
  points.push(Float64Array.of(100 * s, 30000 * s, 50 + 900 * s * (1 - s), 180 - 80 * s, 6500 * ((p * 7919) % 13) / 12));
}

const out = new Float64Array(3);
const jac = new Float64Array(f.jacRows.length);
const hess = new Float64Array(f.hessRows.length);
const w = Float64Array.of(0.3, -1.7, 0.9);
let sink = 0;

// the two versions must agree before they are timed (1e-12 relative, rounding only)
{
  const pattern = Array.from(f.hessRows, (r, k) => `${r},${f.hessCols[k]}`).join(" ");
  if (pattern !== "1,1 2,1 2,2 3,1 3,2 3,3 4,3") throw new Error(`unexpected Hessian pattern ${pattern}`);
  const a = new Float64Array(7);
  const b = new Float64Array(7);
  let worst = 0;
  for (const z of points) {
    f.eval(z, a); dynamicsByHand(z, b);
    for (let i = 0; i < 3; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]) / (1 + Math.abs(b[i])));
    f.jac(z, a); jacobianByHand(z, b);
    for (let i = 0; i < 6; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]) / (1 + Math.abs(b[i])));
    f.hess(z, w, a); hessianByHand(z, w, b);
    for (let i = 0; i < 7; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]) / (1 + Math.abs(b[i])));
  }
  if (worst > 1e-12) throw new Error(`compiled and hand-written functions differ: ${worst}`);
  console.log(`check: compiled and hand-written values agree to ${worst.toExponential(1)} (relative)`);
}

const bench = new Bench({ time: quick ? 300 : 1500, warmupTime: quick ? 100 : 500 });
bench
  .add("compiled dynamics + Jacobian", () => {
    for (let p = 0; p < P; p++) {
      const z = points[p];
      f.eval(z, out);
      f.jac(z, jac);
      sink += out[1] + jac[2];
    }
  })
  .add("hand-written dynamics + Jacobian", () => {
    for (let p = 0; p < P; p++) {
      const z = points[p];
      dynamicsByHand(z, out);
      jacobianByHand(z, jac);
      sink += out[1] + jac[2];
    }
  })
  .add("compiled weighted Hessian", () => {
    for (let p = 0; p < P; p++) {
      f.hess(points[p], w, hess);
      sink += hess[2];
    }
  })
  .add("hand-written weighted Hessian", () => {
    for (let p = 0; p < P; p++) {
      hessianByHand(points[p], w, hess);
      sink += hess[2];
    }
  });

await bench.run();

const mean = (name: string): number => {
  const t = bench.tasks.find((x) => x.name === name);
  const r = t?.result as { latency?: { mean: number } } | undefined;
  if (!r?.latency) throw new Error(`task ${name} has no result`);
  return r.latency.mean;
};
const ns = (ms: number) => `${((ms * 1e6) / P).toFixed(1)} ns/point`;
const cj = mean("compiled dynamics + Jacobian");
const hj = mean("hand-written dynamics + Jacobian");
const ch = mean("compiled weighted Hessian");
const hh = mean("hand-written weighted Hessian");
console.log(`dynamics + Jacobian: compiled ${ns(cj)}, hand-written ${ns(hj)}, ratio ${(cj / hj).toFixed(2)} (goal < 2)`);
console.log(`weighted Hessian:    compiled ${ns(ch)}, hand-written ${ns(hh)}, ratio ${(ch / hh).toFixed(2)}`);

// time to validate and compile the file (cache cleared each time)
const reps = quick ? 20 : 100;
const t0 = performance.now();
for (let r = 0; r < reps; r++) {
  clearProblemCache();
  const again = loadProblem("tests/fixtures/problems/plover-ascent");
  if (!again.ok) throw new Error("reload failed");
}
console.log(`load + validate + compile plover-ascent: ${((performance.now() - t0) / reps).toFixed(2)} ms`);
if (!Number.isFinite(sink)) console.log("(sink)");
