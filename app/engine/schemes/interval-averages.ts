/**
 * Point values of a smooth function from its interval averages, to fourth order.
 *
 * Given nodes t_0 < … < t_N and averages a_k = (1/h_k)∫_{t_k}^{t_{k+1}} p dt, the running integral
 * Q(t_k) = Σ_{j<k} h_j a_j is known at the nodes; p = Q' is evaluated by differentiating the degree-4
 * Lagrange interpolant of Q through the five nodes nearest to the evaluation point (one-sided near the
 * ends). With averages accurate to O(h⁴) the values are O(h⁴) (the reconstruction step of
 * finite-volume schemes, e.g. Colella and Woodward, J. Comput. Phys. 54, 1984, §1, written for
 * non-uniform meshes). Used for the Hermite–Simpson costate: the Simpson-defect multiplier estimates
 * the interval average of the costate (it is its Simpson-rule weight), not its midpoint value.
 */
export function valuesFromAverages(t: ArrayLike<number>, a: ArrayLike<number>, tEval: ArrayLike<number>): Float64Array {
  const N = a.length;
  const out = new Float64Array(tEval.length);
  if (N < 4) {
    // too few intervals for the degree-4 reconstruction: the averages themselves (second order)
    for (let q = 0; q < tEval.length; q++) {
      let k = 0;
      while (k < N - 1 && tEval[q] > t[k + 1]) k++;
      out[q] = a[k];
    }
    return out;
  }
  const Q = new Float64Array(N + 1);
  for (let k = 0; k < N; k++) Q[k + 1] = Q[k] + (t[k + 1] - t[k]) * a[k];
  for (let q = 0; q < tEval.length; q++) {
    const s = tEval[q];
    // five consecutive nodes around s, from the interval k: the first with s ≤ t[k+1] (N − 1 when
    // none), found by bisection (t increases): a scan from 0 made the whole reconstruction O(N²),
    // 12 ms of the Hermite–Simpson N = 3,200 recovery
    const k = firstNotBelow(t, N - 1, s);
    let j0 = Math.min(Math.max(k - 1, 0), N - 4);
    if (j0 + 4 > N) j0 = N - 4;
    let d = 0;
    for (let i = 0; i < 5; i++) {
      // ℓ_i'(s) = Σ_{m≠i} Π_{n≠i,m} (s − x_n) / Π_{n≠i} (x_i − x_n)
      const xi = t[j0 + i];
      let den = 1;
      for (let n = 0; n < 5; n++) if (n !== i) den *= xi - t[j0 + n];
      let num = 0;
      for (let m = 0; m < 5; m++) {
        if (m === i) continue;
        let prod = 1;
        for (let n = 0; n < 5; n++) if (n !== i && n !== m) prod *= s - t[j0 + n];
        num += prod;
      }
      d += (Q[j0 + i] * num) / den;
    }
    out[q] = d;
  }
  return out;
}

/**
 * The smallest k in [0, last] with s ≤ t[k + 1], or last when there is none (t increasing; NaN s
 * gives 0, as a scan would). Not interpolation.ts's `locate`: that one puts a point on a node in
 * the interval to its right, which would move the stencil there and change the values.
 */
function firstNotBelow(t: ArrayLike<number>, last: number, s: number): number {
  let lo = 0, hi = last;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (s > t[mid + 1]) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}
