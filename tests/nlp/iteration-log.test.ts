/**
 * The iteration log in Arcwatch's own form: events are words, never a column of one-letter codes;
 * the terminal log groups the measures (where the iterate stands | barrier | step taken | what
 * happened) and puts restoration iterations under their own heading. Checked on the solver's own
 * log (a small problem, an infeasible one that goes through restoration) and on the solve command.
 */
import { describe, expect, it } from "vitest";
import { spawnSync } from "node:child_process";
import path from "node:path";
import { solveNlp, type NlpProblem } from "~/engine/nlp";
import { ITERATION_EVENTS, TERMINAL_HEAD, eventWords, eventsOfRow, terminalLogPrinter } from "~/engine/nlp/iteration-log";
import type { IterationRecord } from "~/engine/nlp/types";
import { makeProblem, type DenseSpec } from "./helpers/dense-problem";
import { HS } from "./helpers/hock-schittkowski";

const WORDS = new Set<string>(Object.values(ITERATION_EVENTS));

/** Checks one terminal line: 5 groups, the last only known words or "step cut ×k". */
function checkLine(line: string): void {
  const groups = line.split("│");
  expect(groups, line).toHaveLength(5);
  const what = groups[4]!.trim();
  if (what) for (const w of what.split(", ")) expect(WORDS.has(w) || /^step cut ×\d+$/.test(w), `"${w}" in: ${line}`).toBe(true);
  // No single ASCII letter standing alone anywhere on the line (a one-letter event column).
  expect(line, line).not.toMatch(/(^|\s)[A-Za-z](\s|$)/);
}

function logOf(problem: NlpProblem): { lines: string[]; records: IterationRecord[] } {
  const lines: string[] = [];
  const records: IterationRecord[] = [];
  const print = terminalLogPrinter((l) => lines.push(...l.split("\n")));
  solveNlp(problem, { onIteration: (r) => { records.push(r); print(r); } });
  return { lines, records };
}

describe("terminal iteration log", () => {
  it("groups the measures and writes events in words on a regular solve", () => {
    const { lines, records } = logOf(makeProblem(HS.find((s) => s.name === "HS71")!));
    expect(records.length).toBeGreaterThan(3);
    expect(lines.slice(0, 2).join("\n")).toBe(TERMINAL_HEAD);
    expect(lines[0]).toContain("where the iterate stands");
    expect(lines[0]).toContain("step taken");
    expect(lines[1]).toContain("what happened");
    const body = lines.slice(2);
    expect(body).toHaveLength(records.length);
    for (const l of body) checkLine(l);
    // Every recorded event is a named one.
    for (const r of records) for (const e of r.events) expect(e in ITERATION_EVENTS).toBe(true);
  });

  it("puts restoration iterations under their own heading", () => {
    // x1 + x2 = 1 and x1 + x2 = 3 cannot both hold: the filter rejects every step and the solver
    // enters the restoration phase (tests/nlp/statuses.test.ts, same problem).
    const spec: DenseSpec = {
      name: "parallel", n: 2, m: 2, x0: [0, 0], gL: [1, 3], gU: [1, 3], fStar: NaN, source: "by hand",
      f: (x) => x[0] ** 2 + x[1] ** 2,
      grad: (x, o) => { o[0] = 2 * x[0]; o[1] = 2 * x[1]; },
      g: (x, o) => { o[0] = x[0] + x[1]; o[1] = x[0] + x[1]; },
      jac: (_x, a) => { a(0, 0, 1); a(0, 1, 1); a(1, 0, 1); a(1, 1, 1); },
      hess: (_x, s, _l, a) => { a(0, 0, 2 * s); a(1, 1, 2 * s); },
    };
    const { lines, records } = logOf(makeProblem(spec));
    expect(records.some((r) => r.phase === "restoration")).toBe(true);
    const heading = lines.findIndex((l) => l.includes("— restoration phase"));
    expect(heading).toBeGreaterThan(1);
    for (const l of lines.slice(2).filter((x) => !x.trimStart().startsWith("—"))) checkLine(l);
  });

  it("reads logs stored with the former letter codes as named events", () => {
    expect(eventsOfRow({ info: "hs" })).toEqual(["hessian-shift", "second-order-correction"]);
    expect(eventsOfRow({ events: ["watchdog-kept", "nonsense"] })).toEqual(["watchdog-kept"]);
    expect(eventWords({ lsTrials: 4, events: ["restoration-return"] })).toEqual(["step cut ×3", "back from restoration"]);
  });

  it("the solve command prints the grouped log without a one-letter column", { timeout: 120_000 }, () => {
    const root = path.resolve(import.meta.dirname, "../..");
    const r = spawnSync(process.execPath, ["--import", "tsx", "bench/solve.ts", "pika-rover-dash", "--scheme", "trapezoidal", "--intervals", "10", "--no-resim"], { cwd: root, encoding: "utf8" });
    expect(r.status, r.stderr).toBe(0);
    const lines = r.stderr.split("\n").filter((l) => l.includes("│"));
    expect(lines.length).toBeGreaterThan(4);
    expect(lines[0]).toContain("where the iterate stands");
    for (const l of lines.slice(2)) checkLine(l);
  });
});
