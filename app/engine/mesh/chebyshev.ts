/**
 * A polynomial piece of a discrete solution, recovered exactly from point values so that its
 * derivative can be evaluated (Solution exposes values only, stateAt; every scheme's state is a
 * polynomial of known degree on each mesh interval).
 *
 * Method: interpolation in the n Chebyshev points of the first kind x_j = cos((2j+1)π/(2n)) on
 * [−1, 1], coefficients of p = Σ_{m<n} c_m T_m by the discrete cosine sums
 *   c_m = (2/n) Σ_j y_j T_m(x_j)   (c_0 halved),
 * and the derivative coefficients by the recurrence c'_{m−1} = c'_{m+1} + 2m c_m
 * (Mason and Handscomb, Chebyshev Polynomials, CRC 2003, eq. (4.18) for the interpolant in the zeros
 * of T_n and eq. (2.49) for the derivative recurrence). Exact (up to rounding) for polynomials of
 * degree < n, with condition number O(log n) in the values: no Vandermonde solve.
 */

/** The n first-kind Chebyshev points on [−1, 1]. */
export function chebyshevPoints(n: number): Float64Array {
  const x = new Float64Array(n);
  for (let j = 0; j < n; j++) x[j] = Math.cos(((2 * j + 1) * Math.PI) / (2 * n));
  return x;
}

/** Coefficients c_0..c_{n−1} of the interpolant of values y_j at chebyshevPoints(n). */
export function chebyshevCoefficients(y: ArrayLike<number>): Float64Array {
  const n = y.length;
  const c = new Float64Array(n);
  for (let m = 0; m < n; m++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += y[j] * Math.cos((m * (2 * j + 1) * Math.PI) / (2 * n));
    c[m] = ((m === 0 ? 1 : 2) / n) * s;
  }
  return c;
}

/** Coefficients of the derivative d/dx of Σ c_m T_m(x) (length n, the last entry 0). */
export function chebyshevDerivative(c: ArrayLike<number>): Float64Array {
  const n = c.length;
  const d = new Float64Array(n);
  for (let m = n - 1; m >= 1; m--) d[m - 1] = (m + 1 < n ? d[m + 1] : 0) + 2 * m * c[m];
  d[0] *= 0.5;
  return d;
}

/** Σ c_m T_m(x) by Clenshaw's recurrence (Mason and Handscomb 2003, §2.4.1). */
export function chebyshevAt(c: ArrayLike<number>, x: number): number {
  let b1 = 0, b2 = 0;
  for (let m = c.length - 1; m >= 1; m--) {
    const b0 = 2 * x * b1 - b2 + c[m];
    b2 = b1;
    b1 = b0;
  }
  return x * b1 - b2 + c[0];
}
