/**
 * Initial guesses at normalised time τ = (t − t0)/(tf − t0) ∈ [0, 1].
 *
 * Per state the default is a straight line from its initial end value to its final end value,
 * where an end value is: the fixed value; the middle of a two-sided range; the one finite side of
 * a one-sided range; otherwise the other end's value; otherwise the middle of the state's
 * bounds (or its one finite bound, or 0). Kind "constant" holds each state at its initial end
 * value instead. Controls default to the middle of their bounds (or the finite bound, or 0).
 * Explicit values: a number (constant) or [start, end] (straight line). Kind "trajectory"
 * interpolates guess.csv linearly (its time column is mapped onto τ ∈ [0, 1]); columns it lacks
 * take the default.
 */
import type { InitialGuess } from "./types";
import { interpolateLinear } from "./csv";

export interface EndRange {
  lower: number;
  upper: number;
}

/** One guessed series: v(τ) = a + (b − a) τ, or a table. */
export type GuessSeries = { kind: "line"; a: number; b: number } | { kind: "table"; tau: Float64Array; y: Float64Array };

export function midOrFinite(lower: number, upper: number): number | undefined {
  const lf = Number.isFinite(lower);
  const uf = Number.isFinite(upper);
  if (lf && uf) return 0.5 * (lower + upper);
  if (lf) return lower;
  if (uf) return upper;
  return undefined;
}

/** Default [start, end] of a state from its end conditions and bounds. */
export function defaultStateEnds(initial: EndRange | undefined, final: EndRange | undefined, bounds: EndRange): [number, number] {
  const end = (r: EndRange | undefined) => (r ? midOrFinite(r.lower, r.upper) : undefined);
  const a0 = end(initial);
  const b0 = end(final);
  const fallback = midOrFinite(bounds.lower, bounds.upper) ?? 0;
  const a = a0 ?? b0 ?? fallback;
  const b = b0 ?? a;
  return [a, b];
}

export function makeGuess(series: GuessSeries[], tf: number): InitialGuess {
  const n = series.length;
  const kinds = new Uint8Array(n);
  const a = new Float64Array(n);
  const b = new Float64Array(n);
  const tables: ({ tau: Float64Array; y: Float64Array } | null)[] = series.map((s, k) => {
    if (s.kind === "line") {
      a[k] = s.a;
      b[k] = s.b;
      return null;
    }
    kinds[k] = 1;
    return { tau: s.tau, y: s.y };
  });
  return {
    tf,
    at(tau: number, out: Float64Array): void {
      for (let k = 0; k < n; k++) {
        if (kinds[k] === 0) out[k] = a[k] + (b[k] - a[k]) * tau;
        else {
          const tb = tables[k]!;
          out[k] = interpolateLinear(tb.tau, tb.y, tau);
        }
      }
    },
  };
}
