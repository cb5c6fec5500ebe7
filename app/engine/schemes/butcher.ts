/**
 * Explicit Runge–Kutta methods as data: a Butcher tableau with its order and source.
 * Invariants (checked in tests/schemes/butcher.test.ts): Σ b_i = 1, c_i = Σ_j a_ij, and the order
 * conditions up to the stated order (Butcher, Numerical Methods for Ordinary Differential
 * Equations, 3rd ed., Wiley 2016, §31).
 */
export interface ButcherTableau {
  name: string;
  order: number;
  /** Strictly lower-triangular stage matrix, a[i][j] for j < i. */
  a: number[][];
  b: number[];
  c: number[];
  source: string;
}

/** The classical fourth-order method (Kutta, Z. Math. Phys. 46, 1901; Butcher 2016, §32, eq. (322a)). */
export const RK4_CLASSICAL: ButcherTableau = {
  name: "classical Runge–Kutta",
  order: 4,
  a: [[], [0.5], [0, 0.5], [0, 0, 1]],
  b: [1 / 6, 1 / 3, 1 / 3, 1 / 6],
  c: [0, 0.5, 0.5, 1],
  source: "Kutta 1901; Butcher, Numerical Methods for ODEs, 2016, §32",
};
