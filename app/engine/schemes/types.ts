/**
 * The one interface every transcription implements (app/engine/schemes/<id>.ts).
 */
import type { CompiledProblem } from "../problem/types";
import type { NlpProblem, NlpResult } from "../nlp/types";

export type SchemeId = "euler" | "trapezoidal" | "hermite-simpson" | "lgr" | "rk4-shooting";

export interface Mesh {
  /** Number of mesh intervals. */
  intervals: number;
  /** Collocation degree per interval (LGR only; default 4). */
  degree?: number;
  /**
   * LGR only: one degree per interval (length intervals), overriding `degree` — the meshes of hp
   * refinement (app/engine/mesh/refine-hp.ts).
   */
  degrees?: number[];
  /** Optional non-uniform breakpoints on [0, 1], strictly increasing, length intervals + 1. */
  breakpoints?: number[];
  /** Scheme variant, e.g. "compressed" for Hermite–Simpson. */
  variant?: string;
}

/** A solution mapped back from the NLP, on the scheme's own grid. */
export interface Solution {
  scheme: SchemeId;
  /** Times of the grid points where states are known (length N). */
  t: Float64Array;
  /** states[i][k] = x_i(t[k]). */
  states: Float64Array[];
  /** Control grid (may differ from t, e.g. Euler holds controls on intervals). */
  tu: Float64Array;
  controls: Float64Array[];
  /** Costate estimates λ_i at times tλ, by the scheme's published mapping; null if not available. */
  tLambda: Float64Array | null;
  costates: Float64Array[] | null;
  /** Path constraint multipliers at the control grid (one array per path constraint), or null. */
  pathMultipliers: Float64Array[] | null;
  t0: number;
  tf: number;
  /** φ + ∫L as written in the file (not sign-flipped). */
  objective: number;
  /** State and control as the scheme implies between grid points. */
  stateAt(t: number, out: Float64Array): void;
  controlAt(t: number, out: Float64Array): void;
}

export interface Transcription {
  nlp: NlpProblem;
  recover(result: NlpResult): Solution;
}

export interface Scheme {
  id: SchemeId;
  /** Human name with the method's usual name, e.g. "Hermite–Simpson (separated)". */
  label: string;
  /** Theoretical order of state accuracy on smooth problems (LGR: Infinity for spectral). */
  order: number;
  transcribe(problem: CompiledProblem, mesh: Mesh): Transcription;
}
