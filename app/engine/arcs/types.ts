/**
 * Arc structure of an optimal control: the sequence of sub-arcs on which each control sits on a
 * bound (bang), strictly inside its bounds (interior: H strictly convex in u; singular: H affine
 * in u, so ∂H/∂u ≡ 0 along the arc), or rides a state / path constraint (boundary).
 *
 * Terminology follows Bryson and Ho, Applied Optimal Control (1975), §3.4 (bang–bang and
 * singular arcs) and §3.11 (state-variable inequality constraints).
 */

export type ArcKind = "lower" | "upper" | "interior" | "singular" | "boundary";

export interface Arc {
  kind: ArcKind;
  /** Control this arc describes (absent on a combined multi-control sequence). */
  control?: string;
  /** Name of the active constraint on a boundary arc (path constraint name or state name). */
  constraint?: string;
  t0: number;
  t1: number;
}

export interface ControlArcs {
  control: string;
  arcs: Arc[];
  /** Interior junction times, length arcs.length − 1, increasing. */
  junctions: number[];
}

export interface ArcStructure {
  /** One sequence per control, in the problem's control order. */
  controls: ControlArcs[];
  /**
   * Compact comparable form: for one control "upper|singular|boundary:qmax|lower"; for several,
   * "name1=...;name2=...".
   */
  signature: string;
  /** Whether a switching function from costate estimates was used. */
  usedSwitchingFunction: boolean;
  /**
   * Sign that makes the scheme's costate estimates follow H = s·L + λᵀf (−1 when the bang
   * points disagreed with the switching function's sign), 0 when it could not be decided.
   */
  costateSign: 1 | -1 | 0;
  /** Short notes about choices made (e.g. costate sign flipped, control treated as affine). */
  notes: string[];
}

export interface ArcDetectionOptions {
  /** A control is on a bound when its distance is ≤ boundTol · (upper − lower). Default 1e-3. */
  boundTol?: number;
  /**
   * A constraint is active when |c − bound| ≤ activeTol · scale, scale = max over the grid of
   * |c − bound|, |c| and |bound|. Default 1e-4.
   */
  activeTol?: number;
  /**
   * Between two active points a constraint stays active while |c − bound| ≤ bridgeTol · scale
   * (direct solutions dip between the touch points of a higher-order boundary arc). Default 5e-3.
   */
  bridgeTol?: number;
  /**
   * The switching function is clearly nonzero when |σ| > switchTol · max|σ|: such points with an
   * interior control value are relabelled by the sign of σ (ringing on a bang arc), and only such
   * bang points decide the costate sign. Default 0.25 (costate estimates of low-order schemes are
   * a few per cent off on singular arcs).
   */
  switchTol?: number;
  /** Arcs shorter than minFraction · (tf − t0) are merged into their neighbours. Default 0.02. */
  minFraction?: number;
  /** A run with fewer grid points than this is never an arc on its own. Default 2. */
  minPoints?: number;
}

/** Label of one arc as used in signatures: "upper", "singular", "boundary:qmax". */
export function arcLabel(arc: Pick<Arc, "kind" | "constraint">): string {
  return arc.kind === "boundary" ? `boundary:${arc.constraint ?? "?"}` : arc.kind;
}

/** Signature of a structure from its per-control sequences. */
export function structureSignature(controls: ControlArcs[]): string {
  const seq = (c: ControlArcs) => c.arcs.map(arcLabel).join("|");
  if (controls.length === 1) return seq(controls[0]);
  return controls.map((c) => `${c.control}=${seq(c)}`).join(";");
}
