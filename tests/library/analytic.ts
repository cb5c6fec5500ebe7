/**
 * Closed-form optimal trajectories of the analytic problems in problems/ (derivations in each
 * problem's description). Used to write their reference.csv (write-analytic-references.ts) and to
 * check those files (analytic-references.test.ts). Each returns the CSV columns at time t.
 */
export interface AnalyticCase {
  id: string;
  t0: number;
  tf: number;
  columns: string[];
  at(t: number): number[];
}

const wren = (() => {
  const a = 0.4, x0 = 2, T = 5, beta = Math.sqrt(a * a + 1);
  const den = beta * Math.cosh(beta * T) - a * Math.sinh(beta * T);
  return {
    id: "wren-wheel-spin-down", t0: 0, tf: T, columns: ["x", "u", "lambda_x"],
    at(t: number) {
      const s = T - t;
      const x = (x0 * (beta * Math.cosh(beta * s) - a * Math.sinh(beta * s))) / den;
      const p = (x0 * Math.sinh(beta * s)) / den;
      return [x, -p, p];
    },
  };
})();

const cableCar = (() => {
  const g = 9.81, xf = 100, yf = 60;
  let lo = 0.01, hi = 2 * Math.PI - 0.01;
  const F = (p: number) => (p - Math.sin(p)) / (1 - Math.cos(p)) - xf / yf;
  for (let i = 0; i < 200; i++) {
    const m = 0.5 * (lo + hi);
    if (F(m) > 0) hi = m;
    else lo = m;
  }
  const phiF = 0.5 * (lo + hi);
  const R = yf / (1 - Math.cos(phiF));
  const w = Math.sqrt(g / R);
  return {
    id: "alder-ridge-cable-car", t0: 0, tf: phiF / w, columns: ["x", "y", "v", "theta"],
    at(t: number) {
      const phi = w * t;
      const y = R * (1 - Math.cos(phi));
      return [R * (phi - Math.sin(phi)), y, Math.sqrt(2 * g * Math.max(y, 0)), phi / 2];
    },
  };
})();

const pika = (() => {
  const D = 40, umax = 0.5, ts = Math.sqrt(D / umax), tf = 2 * ts;
  return {
    id: "pika-rover-dash", t0: 0, tf, columns: ["x", "v", "u"],
    at(t: number) {
      if (t < ts) return [0.5 * umax * t * t, umax * t, umax];
      const s = tf - t;
      return [D - 0.5 * umax * s * s, umax * s, -umax];
    },
  };
})();

const gannet = (() => {
  const x0 = 1.2, umax = 0.4, ts = x0 / umax;
  return {
    id: "gannet-ballast-trim", t0: 0, tf: 6, columns: ["x", "u"],
    at(t: number) {
      return t < ts ? [x0 - umax * t, -umax] : [0, 0];
    },
  };
})();

const osprey = (() => {
  const v0 = 0.6, T = 12, ell = 0.9, ln = ell / (v0 * T);
  const entry = (s: number) => {
    // unit Bryson–Denham entry arc on 0 ≤ s ≤ 3 ℓ_n
    const r = 1 - s / (3 * ln);
    return [ln * (1 - r * r * r), r * r, (-2 / (3 * ln)) * r];
  };
  return {
    id: "osprey-tug-standoff", t0: 0, tf: T, columns: ["x", "v", "u"],
    at(t: number) {
      const s = t / T;
      let xn: number, vn: number, un: number;
      if (s <= 3 * ln) [xn, vn, un] = entry(s);
      else if (s >= 1 - 3 * ln) {
        const e = entry(1 - s);
        [xn, vn, un] = [e[0], -e[1], e[2]];
      } else [xn, vn, un] = [ln, 0, 0];
      return [v0 * T * xn, v0 * vn, (v0 / T) * un];
    },
  };
})();

const dunlin = (() => {
  const D = 25, T = 10;
  return {
    id: "dunlin-rail-shuttle", t0: 0, tf: T, columns: ["x", "v", "u", "lambda_x", "lambda_v"],
    at(t: number) {
      const s = t / T;
      const u = ((6 * D) / (T * T)) * (1 - 2 * s);
      return [D * (3 * s * s - 2 * s * s * s), ((6 * D) / T) * (s - s * s), u, (-12 * D) / (T * T * T), -u];
    },
  };
})();

export const ANALYTIC_CASES: AnalyticCase[] = [wren, cableCar, pika, gannet, osprey, dunlin];

/** The CSV text of one case sampled at n uniform points. */
export function analyticCsv(c: AnalyticCase, n = 201): string {
  const lines = [["t", ...c.columns].join(",")];
  for (let k = 0; k < n; k++) {
    const t = c.t0 + ((c.tf - c.t0) * k) / (n - 1);
    lines.push([t, ...c.at(t)].map((v) => String(v)).join(","));
  }
  return lines.join("\n") + "\n";
}
