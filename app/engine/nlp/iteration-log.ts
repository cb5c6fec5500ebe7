/**
 * The interior-point iteration log in Arcwatch's own form: what happened in an iteration is a
 * list of named events (never one-letter codes), and the terminal log groups the measures by
 * what they describe — where the iterate stands (objective, primal and dual infeasibility), the
 * barrier (μ and the Hessian shift δw), the step taken (|Δx|, α primal, α dual, how often the
 * line search cut it) — followed by the events in words. Restoration iterations are printed under
 * their own heading instead of a marker on each line. The quantities are those of Wächter &
 * Biegler (Math. Programming 106(1):25–57, 2006); the layout is ours. Pure (no I/O).
 */
import type { IterationRecord } from "./types";

/** Events of one iteration (ipm.ts records them as they happen). */
export const ITERATION_EVENTS = {
  "hessian-shift": "Hessian shifted",
  "second-order-correction": "second-order correction",
  "restoration-return": "back from restoration",
  "tiny-step": "tiny step taken whole",
  "watchdog-trial": "watchdog trial step",
  "watchdog-kept": "watchdog step kept",
  "watchdog-undone": "watchdog step undone",
  "final-step": "final step (gap test)",
} as const;

export type IterationEvent = keyof typeof ITERATION_EVENTS;

/** Logs stored before the events were named carried a string of letters; read both. */
const LEGACY: Record<string, IterationEvent> = {
  h: "hessian-shift", s: "second-order-correction", r: "restoration-return", t: "tiny-step",
  w: "watchdog-trial", W: "watchdog-kept", R: "watchdog-undone", f: "final-step",
};

/** The events of a stored log row (`events` array, or the letters of an older row's `info`). */
export function eventsOfRow(row: Record<string, unknown>): IterationEvent[] {
  if (Array.isArray(row.events)) return row.events.filter((e): e is IterationEvent => typeof e === "string" && e in ITERATION_EVENTS);
  if (typeof row.info === "string") return [...row.info].map((ch) => LEGACY[ch]).filter((e): e is IterationEvent => e !== undefined);
  return [];
}

/** The events of an iteration in words, with the line-search cuts ("step cut ×3") first. */
export function eventWords(rec: Pick<IterationRecord, "lsTrials" | "events">): string[] {
  const out: string[] = [];
  if (rec.lsTrials > 1) out.push(`step cut ×${rec.lsTrials - 1}`);
  for (const e of rec.events) out.push(ITERATION_EVENTS[e]);
  return out;
}

const sci = (v: number, w: number) => (Number.isFinite(v) ? v.toExponential(2) : String(v)).padStart(w);

/** Column groups of the terminal log: a title line over the heads, then one line per iteration. */
export const TERMINAL_HEAD = [
  "       │ where the iterate stands                   │ barrier              │ step taken                      │",
  "  step │        objective   primal inf.    dual inf. │   μ         δw shift │    |Δx|    α primal    α dual   │ what happened",
].join("\n");

/** One iteration as a terminal line (see TERMINAL_HEAD). */
export function terminalLine(r: IterationRecord): string {
  const words = eventWords(r);
  return [
    `${String(r.iter).padStart(6)} │`,
    ` ${r.f.toExponential(8).padStart(16)} ${sci(r.infPr, 13)} ${sci(r.infDu, 12)} │`,
    ` ${sci(r.mu, 9)} ${r.deltaW > 0 ? sci(r.deltaW, 10) : "—".padStart(10)} │`,
    ` ${r.iter === 0 && r.alphaPr === 0 ? "—".padStart(8) : sci(r.normD, 8)} ${sci(r.alphaPr, 11)} ${sci(r.alphaDu, 9)}   │`,
    ` ${words.join(", ")}`,
  ].join("");
}

/**
 * A printer for `onIteration`: the head once, then lines; a change of phase prints a heading
 * ("— restoration phase: reduce infeasibility —" / "— back to the regular phase —").
 */
export function terminalLogPrinter(write: (line: string) => void): (r: IterationRecord) => void {
  let phase: IterationRecord["phase"] | null = null;
  return (r) => {
    if (phase === null) write(TERMINAL_HEAD);
    if (phase !== null && r.phase !== phase)
      write(r.phase === "restoration" ? "  — restoration phase: the filter rejected every step; reduce infeasibility first —" : "  — back to the regular phase —");
    phase = r.phase;
    write(terminalLine(r));
  };
}
