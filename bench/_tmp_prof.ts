import { getScheme } from "~/engine/schemes";
import { fixture } from "../tests/schemes/helpers/fixtures";
const p = fixture("cops-goddard");
for (const N of [100, 800]) {
  const nlp = getScheme("trapezoidal").transcribe(p, { intervals: N }).nlp;
  const y = nlp.x0.slice(); const g = new Float64Array(nlp.m), jv = new Float64Array(nlp.jacRows.length), hv = new Float64Array(nlp.hessRows.length), gr = new Float64Array(nlp.n), lam = new Float64Array(nlp.m).fill(0.1);
  const t0 = performance.now();
  for (let r = 0; r < 50; r++) { y[0] += 1e-9; nlp.f(y); nlp.gradF(y, gr); nlp.g(y, g); nlp.jacValues(y, jv); nlp.hessValues(y, 1, lam, hv); }
  console.log(N, "per eval round ms", ((performance.now() - t0) / 50).toFixed(3), "n", nlp.n, "nnzJ", jv.length, "nnzH", hv.length);
}
