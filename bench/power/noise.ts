/**
 * Measured timing noise of real suite runs, for the detection-power benchmark
 * (bench/detection-power.bench.ts).
 *
 * Input: K ≥ 3 complete runs of one suite on one unchanged commit, as the runner recorded them
 * (case_results + timing_samples). Decomposition of ln(seconds) of sample i of case c in run r:
 *     ln s_{c,r,i} = μ_c + R_r + e_{c,r} + w_{c,r,i}
 * R_r: the run's common shift (machine load while that run ran; mean over cases of the case
 * medians' deviations), e_{c,r}: what is left of the case median's deviation, w: the sample's
 * deviation from its case median within the run. The simulation (./simulate.ts) redraws R and e
 * from their observed values (random sign, since an unchanged commit has no direction) and w from
 * the case's own observed within-run residuals, so no distribution is assumed beyond symmetry.
 * Calibration (item 7 of issue 13): the same decomposition on ln(median / case calibration) says
 * whether dividing by the calibration kernel measured beside each case shrinks or widens the
 * between-run spread of median ratios.
 */
import Database from "better-sqlite3";
import { median } from "../../app/engine/stats/summary";

export interface NoiseCase {
  key: string;
  problemId: string;
  scheme: string;
  status: string;
  samples: number[];
  calibration: number | null;
  objectiveErrorRel: number | null;
  finalTimeError: number | null;
  stateError: number | null;
  controlError: number | null;
  iterations: number | null;
}

export interface NoiseRun {
  runId: string;
  commit: string;
  startedAt: number;
  /** Mean of the run's calibration before/after (seconds), if recorded. */
  calibration: number | null;
  cases: Map<string, NoiseCase>;
}

/** Complete, non-demo runs of `suite` at the most frequent commit in the database file. */
export function readNoiseRuns(dbFile: string, suite: string): NoiseRun[] {
  const d = new Database(dbFile, { readonly: true, fileMustExist: true });
  try {
    const runs = d
      .prepare(
        `select r.id, r.commit_hash, r.started_at, r.calibration_seconds, r.machine_json from runs r join suites s on s.id = r.suite_id
         where s.name = ? and r.status = 'complete' and coalesce(r.is_demo, 0) = 0 order by r.started_at`,
      )
      .all(suite) as { id: string; commit_hash: string; started_at: number; calibration_seconds: number | null; machine_json: string | null }[];
    const byCommit = new Map<string, number>();
    for (const r of runs) byCommit.set(r.commit_hash, (byCommit.get(r.commit_hash) ?? 0) + 1);
    const commit = [...byCommit.entries()].sort((a, b) => b[1] - a[1])[0]?.[0];
    const rows = d.prepare(
      `select c.case_key, c.problem_id, c.scheme, c.status, c.objective_error_rel, c.final_time_error, c.state_error, c.control_error, c.iterations,
              c.iteration_log_json, t.samples_json
       from case_results c left join timing_samples t on t.case_result_id = c.id where c.run_id = ?`,
    );
    return runs
      .filter((r) => r.commit_hash === commit)
      .map((r) => {
        const cal = (r.machine_json ? (JSON.parse(r.machine_json) as { calibration?: { before?: number; after?: number } }) : {}).calibration;
        const cals = [cal?.before ?? r.calibration_seconds, cal?.after].filter((v): v is number => typeof v === "number" && v > 0);
        const cases = new Map<string, NoiseCase>();
        for (const c of rows.all(r.id) as Record<string, unknown>[]) {
          const log = c.iteration_log_json ? (JSON.parse(c.iteration_log_json as string) as { extra?: { calibrationSeconds?: number } }) : null;
          const calCase = log?.extra?.calibrationSeconds;
          cases.set(c.case_key as string, {
            key: c.case_key as string,
            problemId: c.problem_id as string,
            scheme: c.scheme as string,
            status: c.status as string,
            samples: c.samples_json ? (JSON.parse(c.samples_json as string) as number[]) : [],
            calibration: typeof calCase === "number" && calCase > 0 ? calCase : null,
            objectiveErrorRel: c.objective_error_rel as number | null,
            finalTimeError: c.final_time_error as number | null,
            stateError: c.state_error as number | null,
            controlError: c.control_error as number | null,
            iterations: c.iterations as number | null,
          });
        }
        return { runId: r.id, commit: r.commit_hash, startedAt: r.started_at, calibration: cals.length ? cals.reduce((a, b) => a + b, 0) / cals.length : null, cases };
      });
  } finally {
    d.close();
  }
}

export interface NoiseModel {
  runs: number;
  keys: string[];
  /** Per case: problem, scheme, the centre μ_c (ln s) and the pooled within-run residuals w. */
  cases: Map<string, { problemId: string; scheme: string; mu: number; within: number[]; template: NoiseCase }>;
  /** Observed run shifts R_r (ln units). */
  runShifts: number[];
  /** Observed case residuals e_{c,r} (ln units), all cases pooled, scaled by √(K/(K−1)) (deviations from a K-run mean shrink by that factor). */
  caseShifts: number[];
  /** Standard deviations of R, e and w, for the report. */
  sd: { run: number; case: number; within: number };
}

const sd = (v: number[]) => {
  const m = v.reduce((a, b) => a + b, 0) / v.length;
  return Math.sqrt(v.reduce((a, b) => a + (b - m) ** 2, 0) / Math.max(1, v.length - 1));
};

/** Decomposition of ln(median) deviations; `value(case)` is what is analysed (raw or calibrated median). */
export function decompose(runs: NoiseRun[], value: (c: NoiseCase) => number | null): { keys: string[]; mu: Map<string, number>; runShifts: number[]; caseShifts: number[] } {
  const keys = [...runs[0]!.cases.keys()].filter((k) => runs.every((r) => {
    const c = r.cases.get(k);
    const v = c ? value(c) : null;
    return v !== null && v > 0 && Number.isFinite(v);
  }));
  const y = runs.map((r) => keys.map((k) => Math.log(value(r.cases.get(k)!)!)));
  const mu = new Map(keys.map((k, j) => [k, y.reduce((a, row) => a + row[j]!, 0) / runs.length]));
  const dev = y.map((row) => row.map((v, j) => v - mu.get(keys[j]!)!));
  const runShifts = dev.map((row) => row.reduce((a, b) => a + b, 0) / row.length);
  const K = runs.length;
  const inflate = Math.sqrt(K / (K - 1));
  const caseShifts = dev.flatMap((row, r) => row.map((v) => (v - runShifts[r]!) * inflate));
  return { keys, mu, runShifts: runShifts.map((v) => v * inflate), caseShifts };
}

/** The noise model from K ≥ 3 runs of one commit (solved, timed cases present in every run). */
export function fitNoise(runs: NoiseRun[]): NoiseModel {
  if (runs.length < 3) throw new Error(`need at least 3 complete runs of one commit to measure noise, found ${runs.length}`);
  const timed = (c: NoiseCase) => (c.samples.length >= 3 && ["optimal", "acceptable"].includes(c.status) ? median(c.samples) : null);
  const d = decompose(runs, timed);
  const cases: NoiseModel["cases"] = new Map();
  for (const k of d.keys) {
    const within = runs.flatMap((r) => {
      const s = r.cases.get(k)!.samples;
      const m = Math.log(median(s));
      return s.map((v) => Math.log(v) - m);
    });
    const t = runs[0]!.cases.get(k)!;
    cases.set(k, { problemId: t.problemId, scheme: t.scheme, mu: d.mu.get(k)!, within, template: t });
  }
  return {
    runs: runs.length,
    keys: d.keys,
    cases,
    runShifts: d.runShifts,
    caseShifts: d.caseShifts,
    sd: { run: sd(d.runShifts), case: sd(d.caseShifts), within: sd([...cases.values()].flatMap((c) => c.within)) },
  };
}

/**
 * Item 7: spread of ln(median ratio) between every pair of runs, raw and divided by the ratio of
 * the case-level calibrations (and by the run-level ones). Smaller spread = less noise in ratios.
 */
export function calibrationEffect(runs: NoiseRun[]): { pairs: number; raw: number; caseCalibrated: number | null; runCalibrated: number | null; calibrationSpread: number | null } {
  const keys = [...runs[0]!.cases.keys()].filter((k) => runs.every((r) => (r.cases.get(k)?.samples.length ?? 0) >= 3));
  const raw: number[] = [];
  const byCase: number[] = [];
  const byRun: number[] = [];
  const cal: number[] = [];
  for (let a = 0; a < runs.length; a++)
    for (let b = a + 1; b < runs.length; b++)
      for (const k of keys) {
        const x = runs[b]!.cases.get(k)!, y = runs[a]!.cases.get(k)!;
        const r = Math.log(median(x.samples) / median(y.samples));
        raw.push(r);
        if (x.calibration && y.calibration) {
          byCase.push(r - Math.log(x.calibration / y.calibration));
          cal.push(Math.log(x.calibration / y.calibration));
        }
        if (runs[b]!.calibration && runs[a]!.calibration) byRun.push(r - Math.log(runs[b]!.calibration! / runs[a]!.calibration!));
      }
  const rms = (v: number[]) => Math.sqrt(v.reduce((s, u) => s + u * u, 0) / v.length);
  return {
    pairs: raw.length,
    raw: rms(raw),
    caseCalibrated: byCase.length === raw.length ? rms(byCase) : null,
    runCalibrated: byRun.length === raw.length ? rms(byRun) : null,
    calibrationSpread: cal.length ? rms(cal) : null,
  };
}
