/**
 * Performance profiles: E. D. Dolan, J. J. Moré, "Benchmarking optimization software with
 * performance profiles", Math. Programming 91(2), 201–213, 2002.
 *
 * For problems p ∈ P (n_p of them) and solvers s ∈ S with cost t_{p,s} (time, iterations...):
 *     r_{p,s} = t_{p,s} / min{ t_{p,s'} : s' ∈ S }                         (their §2)
 *     ρ_s(τ)  = (1/n_p) · #{ p ∈ P : r_{p,s} ≤ τ }                          (their §2)
 * A failure (solver s does not solve p) gets r_{p,s} = r_M with r_M larger than every other ratio,
 * so it never counts for τ < r_M. Here failures are represented by r = Infinity and `rM` is
 * reported separately for plotting (twice the largest finite ratio, at least 2). A problem that no
 * solver solves counts as a failure for all solvers.
 *
 * Input: cost[p][s] (n_p × n_s), with null, NaN, ±Infinity or a non-positive value meaning failure.
 */

export interface PerformanceProfile {
  /** ratio[p][s] = r_{p,s}; Infinity for a failure. */
  ratio: number[][];
  /** A value above every finite ratio, for drawing failures. */
  rM: number;
  /** For each solver, the step function ρ_s as breakpoints: ρ_s(τ) = rho[k] for tau[k] ≤ τ < tau[k+1]. */
  curves: { tau: number[]; rho: number[] }[];
  /** ρ_s(1): share of problems where s is (one of) the fastest. */
  wins: number[];
  /** lim_{τ→r_M⁻} ρ_s(τ): share of problems s solves at all. */
  robustness: number[];
}

export function performanceProfile(cost: (number | null)[][]): PerformanceProfile {
  const np = cost.length;
  if (np === 0) throw new Error("performanceProfile: no problems");
  const ns = cost[0].length;
  if (ns === 0) throw new Error("performanceProfile: no solvers");
  cost.forEach((row, p) => {
    if (row.length !== ns) throw new Error(`performanceProfile: row ${p} has ${row.length} entries, expected ${ns}`);
  });
  const ok = (v: number | null): v is number => v !== null && Number.isFinite(v) && v > 0;
  const ratio = cost.map((row) => {
    let best = Infinity;
    for (const v of row) if (ok(v) && v < best) best = v;
    return row.map((v) => (ok(v) && best < Infinity ? v / best : Infinity));
  });
  let maxFinite = 1;
  for (const row of ratio) for (const r of row) if (r < Infinity && r > maxFinite) maxFinite = r;
  const rM = Math.max(2, 2 * maxFinite);
  const curves = [];
  const wins: number[] = [];
  const robustness: number[] = [];
  for (let s = 0; s < ns; s++) {
    const rs = ratio.map((row) => row[s]).filter((r) => r < Infinity).sort((a, b) => a - b);
    const tau: number[] = [];
    const rho: number[] = [];
    for (let k = 0; k < rs.length; k++) {
      if (k + 1 < rs.length && rs[k + 1] === rs[k]) continue; // take the last of equal ratios
      tau.push(rs[k]);
      rho.push((k + 1) / np);
    }
    curves.push({ tau, rho });
    wins.push(rs.filter((r) => r <= 1).length / np);
    robustness.push(rs.length / np);
  }
  return { ratio, rM, curves, wins, robustness };
}

/** ρ_s(τ) evaluated from a profile. */
export function profileAt(profile: PerformanceProfile, solver: number, tau: number): number {
  const c = profile.curves[solver];
  let v = 0;
  for (let k = 0; k < c.tau.length && c.tau[k] <= tau; k++) v = c.rho[k];
  return v;
}
