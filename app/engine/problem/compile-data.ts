/**
 * Problem compiler phases for the data that comes with a problem (compile.ts): the initial guess
 * (kinds, overrides, guess.csv) and the references (objective, final time, switching times,
 * arcs, reference.csv with its provenance), and the checks of both CSV files' columns.
 */
import type { ConstraintInfo, Horizon, InitialGuess, ProblemReference, Provenance, ReferenceTrajectory, VariableInfo } from "./types";
import type { ProblemFile, ProvenanceSpec } from "./schema";
import type { ProblemError } from "./errors";
import { parseTrajectoryCsv, type CsvTable } from "./csv";
import { defaultStateEnds, makeGuess, midOrFinite, type EndRange, type GuessSeries } from "./guess";
import { nearestName } from "../expr/suggest";
import { CompilerBase, type Declared, type Seg } from "./compile-base";

export abstract class DataFileCompiler extends CompilerBase {
  protected guessOf(
    p: ProblemFile,
    d: Declared,
    stateInfo: VariableInfo[],
    controlInfo: VariableInfo[],
    ends: { initial: (EndRange | undefined)[]; final: (EndRange | undefined)[] },
    horizon: Horizon,
  ): InitialGuess {
    const spec = p.guess ?? { kind: "linear" as const };
    const nx = d.stateNames.length;
    const series: GuessSeries[] = stateInfo.map((s, i) => {
      const [a, b] = defaultStateEnds(ends.initial[i], ends.final[i], s);
      return spec.kind === "constant" ? { kind: "line", a, b: a } : { kind: "line", a, b };
    });
    for (const c of controlInfo) {
      const m = midOrFinite(c.lower, c.upper) ?? 0;
      series.push({ kind: "line", a: m, b: m });
    }
    const ft = p.horizon.finalTime;
    const horizonGuessGiven = "free" in ft && ft.free.guess !== undefined;
    let tf = horizon.kind === "fixed" ? horizon.tf : horizon.guess;
    let tfFrom: Seg[] = ["horizon", "finalTime", "free", "guess"];
    if (spec.kind === "trajectory") {
      const table = this.csvChecked(this.files.guessCsv, spec.file, ["guess", "file"], d.stateNames, d.controlNames, false);
      if (table) {
        const t = table.columns[0];
        const tau = t.map((x) => (x - t[0]) / (t[t.length - 1] - t[0]));
        table.header.forEach((h, k) => {
          const i = d.stateNames.indexOf(h);
          const j = d.controlNames.indexOf(h);
          if (k > 0 && i >= 0) series[i] = { kind: "table", tau, y: table.columns[k] };
          else if (k > 0 && j >= 0) series[nx + j] = { kind: "table", tau, y: table.columns[k] };
        });
        if (horizon.kind === "free" && !horizonGuessGiven) {
          tf = t[t.length - 1];
          tfFrom = ["guess", "file"];
        }
      }
    } else {
      for (const which of ["states", "controls"] as const) {
        const vals = spec[which] ?? {};
        const names = which === "states" ? d.stateNames : d.controlNames;
        for (const key of Object.keys(vals)) {
          const j = names.indexOf(key);
          if (j < 0) {
            this.err(["guess", which, key], `'${key}' is not a ${which === "states" ? "state" : "control"}`, { suggestion: nearestName(key, names) });
            continue;
          }
          const v = vals[key];
          series[(which === "states" ? 0 : nx) + j] = typeof v === "number" ? { kind: "line", a: v, b: v } : { kind: "line", a: v[0], b: v[1] };
        }
      }
    }
    if (spec.finalTime !== undefined) {
      if (horizon.kind === "fixed") this.warn(["guess", "finalTime"], "ignored: the final time is fixed");
      else {
        if (horizonGuessGiven && horizon.guess !== spec.finalTime) {
          this.warn(["guess", "finalTime"], `differs from horizon.finalTime.free.guess (${horizon.guess}); guess.finalTime is used`);
        }
        tf = spec.finalTime;
        tfFrom = ["guess", "finalTime"];
      }
    }
    if (horizon.kind === "free") {
      if (tfFrom[0] === "guess" && (tf < horizon.lower || tf > horizon.upper)) {
        this.err(tfFrom, `final-time guess ${tf} is outside the final-time bounds [${horizon.lower}, ${horizon.upper}]`);
      }
      horizon.guess = tf; // one final-time guess for everybody
    }
    if (spec.kind !== "trajectory" && this.files.guessCsv !== undefined) {
      this.warn(["guess"], "guess.csv is present but the guess is not of kind \"trajectory\"");
    }
    return makeGuess(series, tf);
  }

  protected referenceOf(p: ProblemFile, d: Declared, horizon: Horizon, pathInfo: ConstraintInfo[]): ProblemReference {
    const reference: ProblemReference = {};
    const ref = p.reference ?? {};
    const value = (r: { value: number; tolerance: number; provenance: ProvenanceSpec }) => ({
      value: r.value,
      tolerance: r.tolerance,
      provenance: provenance(r.provenance),
    });
    if (ref.objective) reference.objective = value(ref.objective);
    if (ref.finalTime) {
      reference.finalTime = value(ref.finalTime);
      const at: Seg[] = ["reference", "finalTime", "value"];
      if (horizon.kind === "fixed" && Math.abs(ref.finalTime.value - horizon.tf) > ref.finalTime.tolerance) {
        this.err(at, `reference final time ${ref.finalTime.value} differs from the fixed final time ${horizon.tf}`);
      }
      if (horizon.kind === "free" && (ref.finalTime.value < horizon.lower || ref.finalTime.value > horizon.upper)) {
        this.err(at, `reference final time ${ref.finalTime.value} is outside the final-time bounds [${horizon.lower}, ${horizon.upper}]`);
      }
    }
    if (ref.switchingTimes) {
      const st = ref.switchingTimes;
      const hi = horizon.kind === "fixed" ? horizon.tf : horizon.upper;
      st.values.forEach((v, k) => {
        const at: Seg[] = ["reference", "switchingTimes", "values", k];
        if (v < horizon.t0 || v > hi) this.err(at, `switching time ${v} lies outside the horizon [${horizon.t0}, ${hi}]`);
        if (k > 0 && !(v > st.values[k - 1])) this.err(at, "switching times must increase");
      });
      reference.switchingTimes = { values: [...st.values], tolerance: st.tolerance, provenance: provenance(st.provenance) };
    }
    if (ref.arcs) {
      const pathNames = pathInfo.map((c) => c.name);
      ref.arcs.forEach((arc, k) => {
        const m = /^boundary:(.*)$/.exec(arc);
        if (m && !pathNames.includes(m[1]) && !d.stateNames.includes(m[1])) {
          this.err(["reference", "arcs", k], `'${m[1]}' is not a path constraint or state`, {
            suggestion: nearestName(m[1], [...pathNames, ...d.stateNames]),
          });
        }
      });
      reference.arcs = [...ref.arcs];
    }
    if (ref.trajectory) {
      const at: Seg[] = ["reference", "trajectory", "file"];
      const table = this.csvChecked(this.files.referenceCsv, ref.trajectory.file, at, d.stateNames, d.controlNames, true);
      if (table) {
        const columns: Record<string, Float64Array> = {};
        table.header.forEach((h, k) => {
          if (k > 0) columns[h] = table.columns[k];
        });
        const traj: ReferenceTrajectory = { t: table.columns[0], columns, provenance: provenance(ref.trajectory.provenance) };
        if (ref.trajectory.tolerance !== undefined) traj.tolerance = ref.trajectory.tolerance;
        reference.trajectory = traj;
      }
    } else if (this.files.referenceCsv !== undefined) {
      this.warn(["reference"], "reference.csv is present but no reference.trajectory names it");
    }
    return reference;
  }

  /** TeX of every expression as written (intermediates by name), keyed by JSON path. */

  protected csvFile(text: string | undefined, name: string, path: Seg[]): CsvTable | null {
    if (text === undefined) {
      this.err(path, `file '${name}' was not found next to problem.json`);
      return null;
    }
    const label = this.dir + name;
    const errs: ProblemError[] = [];
    const table = parseTrajectoryCsv(text, label, errs);
    this.errors.push(...errs);
    return table;
  }

  /** A CSV table whose header and rows are valid, after the column check. */
  protected csvChecked(text: string | undefined, name: string, path: Seg[], states: string[], controls: string[], reference: boolean): CsvTable | null {
    const table = this.csvFile(text, name, path);
    if (!table) return null;
    this.checkColumns(table, name, states, controls, reference);
    return table.valid ? table : null;
  }

  /** Header check: t, every state (reference) or any states (guess), optional controls and costates. */
  protected checkColumns(table: CsvTable, name: string, states: string[], controls: string[], needAllStates: boolean): void {
    const file = this.dir + name;
    const valid = [...states, ...controls, ...(needAllStates ? states.map((s) => `lambda_${s}`) : [])];
    table.header.forEach((h, k) => {
      if (k === 0) return;
      if (!valid.includes(h)) {
        this.err([], `unknown column '${h}' (expected states, controls${needAllStates ? " or lambda_<state>" : ""})`, {
          file,
          column: table.headerColumns[k],
          suggestion: nearestName(h, valid),
        });
        // path of a CSV error is its line, not a JSON path
        this.errors[this.errors.length - 1].path = `line ${table.headerLine}`;
      }
    });
    if (needAllStates) {
      const missing = states.filter((s) => !table.header.includes(s));
      if (missing.length > 0) {
        this.errors.push({ file, path: `line ${table.headerLine}`, message: `missing state column${missing.length > 1 ? "s" : ""} ${missing.map((m) => `'${m}'`).join(", ")}` });
      }
    }
  }
}

function provenance(p: ProvenanceSpec): Provenance {
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(p)) if (v !== undefined) out[k] = v;
  return out as Provenance;
}
