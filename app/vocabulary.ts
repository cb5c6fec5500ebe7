/**
 * Arcwatch's one vocabulary: every metric, status, regression kind, direction symbol, scheme
 * colour and setting label the pages print is defined here once, with its meaning. Pages print
 * names through `metricLabel`, `statusLabel`, `DIRECTION`, `schemeColour`, `thresholdLabel`...
 * and the glossary page (/glossary) lists this module as it stands. Shared by server and browser
 * code (no imports).
 *
 * tests/web/vocabulary.test.ts checks that every status the engine, runner and database can
 * produce and every metric name they record is defined here; the narrow-screen browser test
 * checks that no page prints an identifier-shaped metric or status name.
 */

/** Colour role of a word on screen (Tailwind classes of app/app.css's palette). */
export type Tone = "good" | "bad" | "warn" | "muted" | "accent";
export const TONE_CLASS: Record<Tone, string> = { good: "text-good", bad: "text-bad", warn: "text-warn", muted: "text-muted", accent: "text-accent" };

export interface Entry {
  label: string;
  definition: string;
}

// ---------------------------------------------------------------------------------------
// Metrics: camelCase keys as stored per case; `recorded` is the name the regression detector
// writes into regressions.metric (bench/runner/detect.ts).
// ---------------------------------------------------------------------------------------

export interface MetricEntry extends Entry {
  /** Unit for axis labels ("s", or "" for a pure number). */
  unit: string;
  recorded?: string;
}

export const METRICS = {
  objective: { label: "Objective J", unit: "", definition: "The value of the problem's cost functional at the solution returned." },
  objectiveErrorRel: { label: "Objective error (relative)", unit: "", recorded: "objective_error_rel", definition: "|J − J_ref| / |J_ref| (|J_ref| floored at 1e-12): the objective's distance from the trusted reference, relative to the reference objective. Whenever a page says “objective error” it means this number." },
  objectiveErrorAbs: { label: "Objective error (absolute)", unit: "", definition: "|J − J_ref| without scaling." },
  stateError: { label: "State error (max)", unit: "", recorded: "state_error", definition: "The largest absolute difference between any state of the solution and the reference trajectory, over the reference's time grid. Never mixed with the objective error." },
  controlError: { label: "Control error (max)", unit: "", recorded: "control_error", definition: "The largest absolute difference between a control and the reference control, away from switching instants." },
  finalTime: { label: "Final time t_f", unit: "s", definition: "The horizon's end as solved (free final-time problems) or as given." },
  finalTimeError: { label: "Final-time error", unit: "s", recorded: "final_time_error", definition: "|t_f − t_f,ref| for free final-time problems." },
  resimMiss: { label: "Re-simulation miss", unit: "", definition: "Terminal error when the returned control is integrated by an accurate ODE solver from the initial state: how far the discrete solution is from a trajectory the system can actually fly." },
  constraintViolation: { label: "Constraint violation", unit: "", definition: "Largest violation of the transcribed constraints at the returned point." },
  worstError: { label: "Worst error", unit: "", definition: "max(objective error (relative), state error (max)): the one number that colours a run's matrix, so that a case is only green when both are small." },
  iterations: { label: "NLP iterations", unit: "", recorded: "iterations", definition: "Interior-point iterations until the solver stopped." },
  medianSeconds: { label: "Median solve time", unit: "s", recorded: "median_seconds", definition: "Median wall-clock (or CPU) seconds of the timed repeats of one case; warm-up solves are not counted." },
  meanSeconds: { label: "Mean solve time", unit: "s", definition: "Arithmetic mean of the timed repeats." },
  stddevSeconds: { label: "Spread of solve time (standard deviation)", unit: "s", definition: "Sample standard deviation of the timed repeats." },
  minSeconds: { label: "Fastest solve", unit: "s", definition: "The smallest of the timed repeats." },
  sampleCount: { label: "Timed repeats", unit: "", definition: "How many timed solves the median is taken over." },
  degree: { label: "Polynomial degree per interval", unit: "", definition: "LGR only: collocation points per mesh interval." },
  nlpSize: { label: "NLP variables", unit: "", definition: "Number of unknowns of the nonlinear program the transcription built." },
  transcribeSeconds: { label: "Transcription time", unit: "s", definition: "Seconds spent building the nonlinear program (once per case)." },
  solveSeconds: { label: "Solver time (last solve)", unit: "s", definition: "Seconds inside the NLP solver in the last timed solve." },
  wallSeconds: { label: "Wall time of the case", unit: "s", definition: "Seconds for the whole case: loading, warm-up and every timed repeat." },
  calibrationSeconds: { label: "Calibration time", unit: "s", definition: "Seconds of the fixed calibration workload measured with this case." },
  costateMax: { label: "Costate error (max)", unit: "", definition: "Largest difference between the estimated costates and the reference's, where the reference has them." },
  switchingTimes: { label: "Switching-time error (max)", unit: "s", definition: "Largest difference between detected and reference switching instants." },
  maxPathViolation: { label: "Path-constraint violation on re-simulation", unit: "", definition: "Largest path-constraint violation along the re-simulated trajectory." },
  q1: { label: "First quartile of solve time", unit: "s", definition: "25th percentile of the timed repeats." },
  q3: { label: "Third quartile of solve time", unit: "s", definition: "75th percentile of the timed repeats." },
  arcs: { label: "Arc structure", unit: "", recorded: "arcs", definition: "The sequence of bang, singular and boundary arcs detected in the control, compared with the reference's." },
  status: { label: "Solver status", unit: "", recorded: "status", definition: "How the solve ended (see statuses)." },
  pooledMedianRatio: { label: "Pooled time ratio (group)", unit: "", recorded: "pooled_median_ratio", definition: "For a group of cases (one scheme, one problem or the whole suite): the geometric mean of the cases' median-time ratios against the baseline, with a two-stage bootstrap interval over cases, then samples." },
  meshErrorMax: { label: "Largest mesh error estimate", unit: "", definition: "The largest per-interval estimate of the local error of the dynamics (Betts' residual quadrature for local schemes, the Patterson–Hager–Rao estimate for LGR). It measures how well the solution obeys the dynamics between mesh points, not its distance from the optimum." },
  meshToleranceMet: { label: "Mesh tolerance met", unit: "", recorded: "mesh_tolerance_met", definition: "Adaptive cases: whether refinement brought the largest mesh error estimate under the case's tolerance." },
  meshPasses: { label: "Refinement passes", unit: "", recorded: "mesh_passes", definition: "Adaptive cases: how many solve-estimate-refine passes it took." },
  meshPoints: { label: "Points of the final mesh", unit: "", recorded: "mesh_points", definition: "Adaptive cases: collocation points of the last mesh refinement produced." },
  solverErrorEstimate: { label: "Solver share of the objective error", unit: "", definition: "An upper estimate of how much of the objective error the interior-point solver's stopping point causes (the total duality gap at the returned point); the rest is the discretisation's." },
} satisfies Record<string, MetricEntry>;
export type MetricKey = keyof typeof METRICS;

const METRIC_BY_RECORDED = new Map<string, MetricKey>(Object.entries(METRICS).flatMap(([k, m]) => ("recorded" in m && m.recorded ? [[m.recorded, k as MetricKey]] : [])));

/** The metric of a stored or recorded name (`medianSeconds` or `median_seconds`); null if unknown. */
export function metricOf(name: string): MetricKey | null {
  if (name in METRICS) return name as MetricKey;
  return METRIC_BY_RECORDED.get(name) ?? null;
}

/** The human label of a metric name; an unknown name is shown as “unknown metric (name)”. */
export function metricLabel(name: string): string {
  const k = metricOf(name);
  return k ? METRICS[k].label : `unknown metric (${name})`;
}

/** Label with unit for axes: “Median solve time (s)”. */
export function metricAxisLabel(name: string): string {
  const k = metricOf(name);
  if (!k) return metricLabel(name);
  const m: MetricEntry = METRICS[k];
  return m.unit ? `${m.label} (${m.unit})` : m.label;
}

// ---------------------------------------------------------------------------------------
// Statuses
// ---------------------------------------------------------------------------------------

export interface StatusEntry extends Entry {
  tone: Tone;
}

/** How one case's solve ended (the NLP solver's statuses plus the runner's own). */
export const CASE_STATUSES = {
  optimal: { label: "optimal", tone: "good", definition: "The solver met its convergence test at the requested tolerance." },
  acceptable: { label: "acceptable", tone: "good", definition: "Met the looser acceptable tolerance for several iterations in a row; counted as solved." },
  solved: { label: "solved", tone: "good", definition: "Solved, as reported by an external solver under test." },
  success: { label: "solved", tone: "good", definition: "Solved, as reported by an external solver under test." },
  converged: { label: "converged", tone: "good", definition: "The shooting Newton iteration converged." },
  infeasible: { label: "infeasible", tone: "bad", definition: "The solver concluded that the constraints cannot be met (locally)." },
  unbounded: { label: "unbounded", tone: "bad", definition: "The objective decreased without bound." },
  iteration_limit: { label: "iteration limit", tone: "bad", definition: "Stopped at the maximum number of iterations without converging." },
  time_limit: { label: "time limit", tone: "bad", definition: "Stopped at the solver's own time limit." },
  diverging: { label: "diverging", tone: "bad", definition: "The iterates grew without bound." },
  numerical_trouble: { label: "numerical trouble", tone: "bad", definition: "The linear algebra or line search failed repeatedly (for example a step too small to make progress)." },
  invalid_model: { label: "invalid model", tone: "bad", definition: "The problem produced NaN or infinite values at the starting point." },
  transcription_failed: { label: "transcription failed", tone: "bad", definition: "The problem could not be turned into a nonlinear program for this scheme and mesh." },
  recovery_failed: { label: "recovery failed", tone: "bad", definition: "The solver's recovery phase could not return to a feasible point." },
  timeout: { label: "over time budget", tone: "bad", definition: "The case overran the suite's wall-clock budget and was stopped." },
  error: { label: "error", tone: "bad", definition: "The case crashed before the solver reported; the message says where." },
} satisfies Record<string, StatusEntry>;

/** A suite run as a whole. */
export const RUN_STATUSES = {
  running: { label: "running", tone: "accent", definition: "Cases are still being solved." },
  complete: { label: "complete", tone: "good", definition: "Every case finished (solved or not)." },
  interrupted: { label: "interrupted", tone: "warn", definition: "The run was stopped before every case finished; its cases so far are kept." },
  failed: { label: "failed", tone: "bad", definition: "The run could not proceed (for example the suite or a problem did not load)." },
} satisfies Record<string, StatusEntry>;

/** A job queued from the browser. */
export const JOB_STATUSES = {
  queued: { label: "queued", tone: "muted", definition: "Waiting for the machine: one run at a time." },
  running: { label: "running", tone: "accent", definition: "The worker is running the suite." },
  done: { label: "done", tone: "good", definition: "The run finished and was recorded." },
  failed: { label: "failed", tone: "bad", definition: "The job ended with an error (see its log)." },
  cancelled: { label: "cancelled", tone: "muted", definition: "Cancelled by a person." },
  died: { label: "died", tone: "bad", definition: "The worker disappeared (for example the server restarted) while the job ran." },
} satisfies Record<string, StatusEntry>;

/** Triage state of a finding. */
export const REGRESSION_STATUSES = {
  open: { label: "open", tone: "bad", definition: "Found and not yet looked at." },
  acknowledged: { label: "acknowledged", tone: "warn", definition: "Someone is looking at it." },
  expected: { label: "expected", tone: "muted", definition: "Intended by the change (a reason is recorded)." },
  fixed: { label: "fixed", tone: "good", definition: "A later run no longer shows it." },
} satisfies Record<string, StatusEntry>;

/** An interleaved A/B check of a finding (app/models/ab-checks.server.ts). */
export const AB_CHECK_STATUSES = {
  awaiting: { label: "awaiting A/B", tone: "accent", definition: "An interleaved A/B job is queued or running; the e-mail about a speed or drift finding waits for it." },
  confirmed: { label: "confirmed by A/B", tone: "bad", definition: "Run alternately with its baseline in one sitting, the later commit was slower: the paired ratio is above ×1.03 and its interval above 1." },
  cleared: { label: "cleared by A/B", tone: "good", definition: "Run alternately with its baseline in one sitting, the later commit was not slower: the paired interval lies inside the suite's speed floor (×1.1 by default), so the first flag came from timing noise or machine load." },
  unavailable: { label: "A/B could not decide", tone: "warn", definition: "The A/B job failed, was cancelled or timed nothing (the finding stands unconfirmed), or its interval was too wide to confirm or clear the slowdown: neither above 1 nor inside the suite's speed floor (the finding stays open, is e-mailed unconfirmed and does not fail a --confirm run)." },
} satisfies Record<string, StatusEntry>;

export type StatusFamily = "case" | "run" | "job" | "regression" | "ab";
const FAMILIES: Record<StatusFamily, Record<string, StatusEntry>> = { case: CASE_STATUSES, run: RUN_STATUSES, job: JOB_STATUSES, regression: REGRESSION_STATUSES, ab: AB_CHECK_STATUSES };

export function statusEntry(family: StatusFamily, status: string): StatusEntry | null {
  return (FAMILIES[family] as Record<string, StatusEntry>)[status] ?? null;
}
export function statusLabel(family: StatusFamily, status: string): string {
  return statusEntry(family, status)?.label ?? `unknown status (${status})`;
}
export function statusTone(family: StatusFamily, status: string): string {
  return TONE_CLASS[statusEntry(family, status)?.tone ?? "muted"];
}

// ---------------------------------------------------------------------------------------
// Findings: kinds and directions (one symbol each, everywhere)
// ---------------------------------------------------------------------------------------

export const REGRESSION_KINDS = {
  accuracy: { label: "accuracy", definition: "An error metric (objective, state, control or final time) grew by more than the suite's factor and above its floor." },
  robustness: { label: "robustness", definition: "A case stopped being solved, or needed markedly more iterations." },
  speed: { label: "speed", definition: "The median solve time grew beyond the threshold ratio, with a one-sided Mann–Whitney test and a bootstrap interval agreeing." },
  structure: { label: "arc structure", definition: "The sequence of bang, singular and boundary arcs changed." },
  drift: { label: "slow drift", definition: "Solve time moved gradually over many runs (a change point in the history), though no single step crossed the speed threshold." },
} satisfies Record<string, Entry>;

export function kindLabel(kind: string): string {
  return (REGRESSION_KINDS as Record<string, Entry>)[kind]?.label ?? `unknown kind (${kind})`;
}

/** ▲ worse, ▽ better: a filled warning shape for regressions, a hollow one for improvements. */
export const DIRECTION = {
  regression: { label: "regression", symbol: "▲", tone: "bad", definition: "The change made a case worse." },
  improvement: { label: "improvement", symbol: "▽", tone: "good", definition: "The change made a case better." },
} as const satisfies Record<string, StatusEntry & { symbol: string }>;
export type Direction = keyof typeof DIRECTION;
export const directionOf = (d: string): (typeof DIRECTION)[Direction] => (d === "improvement" ? DIRECTION.improvement : DIRECTION.regression);

/** Demo data: runs seeded for the tour, never real measurements. */
export const DEMO = { label: "demo", definition: "Seeded by `npm start` to show the product: invented history around one real run. Never used as a baseline for real runs." };

// ---------------------------------------------------------------------------------------
// Schemes and their colours
// ---------------------------------------------------------------------------------------

export const SCHEMES = {
  euler: { label: "explicit Euler", definition: "First-order explicit Euler transcription: the control is held over each interval." },
  trapezoidal: { label: "trapezoidal", definition: "Trapezoidal collocation, second order." },
  "hermite-simpson": { label: "Hermite–Simpson", definition: "Hermite–Simpson collocation (cubic state, midpoint control), fourth order for smooth solutions." },
  lgr: { label: "LGR pseudospectral", definition: "Legendre–Gauss–Radau collocation per interval (degree given per mesh); spectral for smooth solutions." },
  "rk4-shooting": { label: "RK4 multiple shooting", definition: "Multiple shooting with a classical fourth-order Runge–Kutta step per interval." },
} satisfies Record<string, Entry>;

/**
 * One colour per scheme, from the colour-blind-safe qualitative palette of M. Okabe and K. Ito,
 * “Color Universal Design (CUD): how to make figures and presentations that are friendly to
 * colorblind people” (2008), https://jfly.uni-koeln.de/color/. Five of its eight colours
 * (yellow is left out: too pale on white). The dark theme swaps blue for the palette's sky blue,
 * readable on a dark background. The CSS variables are defined in app/app.css.
 */
export const SCHEME_PALETTE = {
  euler: { light: "#D55E00", dark: "#D55E00", name: "vermillion" },
  trapezoidal: { light: "#0072B2", dark: "#56B4E9", name: "blue / sky blue" },
  "hermite-simpson": { light: "#009E73", dark: "#009E73", name: "bluish green" },
  lgr: { light: "#CC79A7", dark: "#CC79A7", name: "reddish purple" },
  "rk4-shooting": { light: "#E69F00", dark: "#E69F00", name: "orange" },
} as const;

export function schemeLabel(scheme: string): string {
  return (SCHEMES as Record<string, Entry>)[scheme]?.label ?? scheme;
}
/** The scheme's colour as a CSS variable (follows the theme); unknown schemes are drawn muted. */
export function schemeColour(scheme: string): string {
  return scheme in SCHEME_PALETTE ? `var(--aw-scheme-${scheme})` : "var(--aw-muted)";
}

// ---------------------------------------------------------------------------------------
// Terms used across pages
// ---------------------------------------------------------------------------------------

export const TERMS = {
  case: { label: "case", definition: "One problem solved by one scheme on one mesh, in one run." },
  mesh: { label: "mesh", definition: "The number of intervals N (and, for LGR, the polynomial degree per interval, written N×degree)." },
  suite: { label: "suite", definition: "A file naming problems (by id or tag), schemes, meshes, timed repeats and thresholds; one run measures one suite at one commit." },
  run: { label: "run", definition: "One suite measured at one commit on one machine." },
  baseline: { label: "baseline", definition: "The earlier run of the same suite on the same machine that a run is compared with." },
  fittedOrder: { label: "fitted order", definition: "Minus the least-squares slope of log error against log N over at least two meshes; needs two mesh sizes per scheme. Fitted only over the meshes from which the error falls; none when the finest mesh's error does not fall." },
  preAsymptotic: { label: "pre-asymptotic", definition: "The error does not fall between the coarsest meshes but falls from some N on: those coarse meshes are outside the range where error ≈ C·N^(−p), and the order is fitted from that N on." },
  notMonotone: { label: "not monotone", definition: "The finest mesh's error is not below the previous one: no order is shown. The note names the cause: the discretisation's (solver share below 0.1), or the solver possibly (a larger share: the solver could account for it)." },
  solverShare: { label: "solver share", definition: "The solver's duality gap divided by the objective error. The gap bounds the solver's part of the error from above: below 0.1 the error is the scheme's; near or above 1 the solver could account for it, but the gap can exceed the solver's actual part many times, so it is not proof." },
  theoreticalOrder: { label: "theoretical order", definition: "The order the method has for smooth solutions (spectral for LGR)." },
  tolerance: { label: "tolerance", definition: "The largest error accepted when looking for the cheapest setting." },
  performanceProfile: { label: "performance profile", definition: "ρ(τ): the share of problems a scheme solves within a factor τ of the best scheme's cost (Dolan & Moré, Math. Programming 91, 2002)." },
  timingSource: { label: "timing source", definition: "The suite and repeat setting timings were taken under; timings from different sources are never mixed on one chart." },
  calibration: { label: "calibration", definition: "Seconds taken by a fixed workload at run start; speed ratios are divided by the calibration ratio to cancel a slower machine." },
} satisfies Record<string, Entry>;

// ---------------------------------------------------------------------------------------
// Settings: regression thresholds in words
// ---------------------------------------------------------------------------------------

export const THRESHOLDS = {
  accuracyFactor: { label: "Accuracy: growth factor", definition: "Flag when an error grows by more than this factor…" },
  accuracyFloor: { label: "Accuracy: floor", definition: "…and the new error is above this absolute value." },
  iterationShare: { label: "Robustness: iteration growth", definition: "Flag when iterations grow by more than this share (0.25 = 25 %)…" },
  iterationMin: { label: "Robustness: at least this many more iterations", definition: "…and by at least this many iterations." },
  speedRatio: { label: "Speed: time ratio", definition: "Flag when the median time ratio exceeds this…" },
  alpha: { label: "Speed: significance level", definition: "…and the one-sided Mann–Whitney p-value is below this." },
  confidence: { label: "Speed: interval level", definition: "Two-sided level of the bootstrap interval of the median ratio." },
  screenSpeedRatio: { label: "A/B: screening ratio", definition: "With A/B confirmation on, a scheme whose cases moved by more than this pooled time ratio (a point estimate, no test) is checked by interleaved A/B even when no rule flagged it; 0 checks every scheme." },
  confirmMaxBlocks: { label: "A/B: most blocks", definition: "An A/B check starts with 6 blocks and adds more while a verdict it was asked for is still unclear, up to this many." },
  driftMinShift: { label: "Drift: smallest shift", definition: "Smallest |shift| of ln(time ratio) between the last two segments; ln 1.1 ≈ 0.0953 is a 10 % shift." },
  driftMinHistory: { label: "Drift: runs of history needed", definition: "Runs of history before change points are looked for." },
} satisfies Record<string, Entry>;

export function thresholdLabel(key: string): string {
  return (THRESHOLDS as Record<string, Entry>)[key]?.label ?? `unknown setting (${key})`;
}

/** A threshold value for people: at most six significant digits (0.0953102, not 0.09531017980432493). */
export function formatSetting(v: unknown): string {
  if (typeof v === "number" && Number.isFinite(v)) return String(Number(v.toPrecision(6)));
  if (typeof v === "boolean") return v ? "yes" : "no";
  return String(v);
}
