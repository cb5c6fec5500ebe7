/**
 * The standard normal distribution: erfc and the upper tail Φ̄(z) = 1 − Φ(z) = erfc(z/√2)/2.
 *
 * erfc is evaluated from two exact expansions (M. Abramowitz, I. A. Stegun, "Handbook of
 * Mathematical Functions", 1964):
 *   |x| < 2:  the Maclaurin series erf(x) = (2/√π) Σ_{n≥0} (−1)ⁿ x^{2n+1} / (n!(2n+1))   (7.1.5)
 *   x ≥ 2:    the continued fraction erfc(x) = (e^{−x²}/√π) · 1/(x + (1/2)/(x + 1/(x + (3/2)/(x + …))))
 *             (7.1.14; partial numerators a_k = k/2), evaluated by the modified Lentz method
 *             (W. H. Press et al., "Numerical Recipes", 3rd ed., 2007, §5.2).
 * Both are summed until the relative change is below machine epsilon, so the result is accurate
 * to a few ulps in the body and keeps full relative accuracy deep in the upper tail.
 */

const SQRT_PI = Math.sqrt(Math.PI);
const EPS = 2.220446049250313e-16; // double-precision machine epsilon 2⁻⁵²
const TINY = 1e-300; // Lentz guard against division by zero

function erfSeries(x: number): number {
  // term_n = (−1)ⁿ x^{2n+1} / n!, divided by (2n+1) when summed.
  const x2 = x * x;
  let term = x;
  let sum = x;
  for (let n = 1; n < 200; n++) {
    term *= -x2 / n;
    const add = term / (2 * n + 1);
    sum += add;
    if (Math.abs(add) < EPS * Math.abs(sum)) break;
  }
  return (2 / SQRT_PI) * sum;
}

function erfcContinuedFraction(x: number): number {
  // f = x + a1/(x + a2/(x + ...)), a_k = k/2; modified Lentz.
  let f = x;
  let C = x;
  let D = 0;
  for (let k = 1; k < 500; k++) {
    const a = k / 2;
    D = x + a * D;
    if (Math.abs(D) < TINY) D = TINY;
    C = x + a / C;
    if (Math.abs(C) < TINY) C = TINY;
    D = 1 / D;
    const delta = C * D;
    f *= delta;
    if (Math.abs(delta - 1) < EPS) break;
  }
  return Math.exp(-x * x) / (SQRT_PI * f);
}

/** Complementary error function erfc(x) = (2/√π) ∫ₓ^∞ e^{−t²} dt. */
export function erfc(x: number): number {
  if (Number.isNaN(x)) return NaN;
  if (x >= 2) return x > 27 ? 0 : erfcContinuedFraction(x);
  if (x <= -2) return 2 - erfc(-x);
  return 1 - erfSeries(x);
}

/** Upper tail of the standard normal, P(Z > z) = erfc(z/√2)/2. */
export function normalSf(z: number): number {
  return 0.5 * erfc(z / Math.SQRT2);
}

/** Standard normal CDF Φ(z) = P(Z ≤ z). */
export function normalCdf(z: number): number {
  return 0.5 * erfc(-z / Math.SQRT2);
}
