/**
 * Executor for an external solver speaking the "arcwatch-solver/1" protocol
 * (bench/external/protocol.schema.json, DEVELOPERS.md "Benchmark runner"): for each solve the
 * command gets one JSON request on standard input and must print one JSON response on standard
 * output. Arcwatch computes the errors against the problem's reference itself, so an external
 * solver is judged exactly like the built-in one.
 *
 * Errors computed here:
 *   objectiveAbs = |J − J_ref|, objectiveRel = |J − J_ref| / max(1, |J_ref|)
 *   finalTimeAbs = |t_f − t_f,ref|
 *   stateMax / controlMax = max over variables i and the answer's grid times t_k inside the
 *     reference's time span of |x_i(t_k) − x_i,ref(t_k)| / max(1, max |x_i,ref|), the reference
 *     (usually the finer grid) linearly interpolated. Controls are compared the same way, so a
 *     jump between grid points counts fully at the points next to it.
 */
import { spawnSync } from "node:child_process";
import { z } from "zod";
import { ProblemLibrary } from "../../app/engine/problem/library";
import { loadFromLibrary } from "../../app/engine/problem/load";
import type { CompiledProblem } from "../../app/engine/problem/types";
import type { CreateExecutor } from "./executor";
import type { CaseReport, CaseSpec } from "../../app/runs/types";

export const PROTOCOL = "arcwatch-solver/1";

const series = z.record(z.string(), z.array(z.number()));
export const solverResponseSchema = z.object({
  protocol: z.literal(PROTOCOL),
  status: z.string().min(1),
  message: z.string().optional(),
  objective: z.number().nullable().optional(),
  finalTime: z.number().nullable().optional(),
  iterations: z.number().int().nullable().optional(),
  constraintViolation: z.number().nullable().optional(),
  solveSeconds: z.number().nullable().optional(),
  trajectory: z.object({ t: z.array(z.number()), states: series, controls: series.optional() }).optional(),
});
export type SolverResponse = z.infer<typeof solverResponseSchema>;

/** Linear interpolation of (ts, ys) at t (clamped to the ends). */
function interp(ts: number[], ys: number[], t: number): number {
  if (t <= ts[0]) return ys[0];
  const n = ts.length;
  if (t >= ts[n - 1]) return ys[n - 1];
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (ts[mid] <= t) lo = mid;
    else hi = mid;
  }
  const w = (t - ts[lo]) / (ts[hi] - ts[lo] || 1);
  return ys[lo] + w * (ys[hi] - ys[lo]);
}

function trajectoryError(problem: CompiledProblem, answer: SolverResponse, names: string[], pick: (a: NonNullable<SolverResponse["trajectory"]>) => Record<string, number[]> | undefined): number | null {
  const ref = problem.reference.trajectory;
  const traj = answer.trajectory;
  if (!ref || !traj || traj.t.length < 2) return null;
  const cols = pick(traj);
  if (!cols) return null;
  let worst: number | null = null;
  const refT = Array.from(ref.t);
  const tRefEnd = refT[refT.length - 1];
  for (const name of names) {
    const r = ref.columns[name];
    const y = cols[name];
    if (!r || !y || y.length !== traj.t.length) continue;
    const rv = Array.from(r);
    let scale = 1;
    for (const v of rv) scale = Math.max(scale, Math.abs(v));
    for (let k = 0; k < traj.t.length; k++) {
      if (traj.t[k] < refT[0] - 1e-12 || traj.t[k] > tRefEnd + 1e-12) continue;
      const e = Math.abs(y[k] - interp(refT, rv, traj.t[k])) / scale;
      worst = worst === null ? e : Math.max(worst, e);
    }
  }
  return worst;
}

/** Maps a protocol answer onto the runner's report, computing the errors against the reference. */
export function reportFromResponse(problem: CompiledProblem, spec: CaseSpec, answer: SolverResponse): CaseReport {
  const J = answer.objective ?? null;
  const Jref = problem.reference.objective?.value;
  const tf = answer.finalTime ?? null;
  const tfRef = problem.reference.finalTime?.value;
  return {
    problemId: problem.id,
    versionHash: problem.versionHash,
    scheme: spec.scheme,
    intervals: spec.intervals,
    degree: spec.degree ?? null,
    variant: spec.variant ?? null,
    status: answer.status,
    message: answer.message ?? null,
    objective: J,
    finalTime: tf,
    iterations: answer.iterations ?? null,
    solveSeconds: answer.solveSeconds ?? null,
    constraintViolation: answer.constraintViolation ?? null,
    resim: null,
    errors: {
      objectiveAbs: J !== null && Jref !== undefined ? Math.abs(J - Jref) : null,
      objectiveRel: J !== null && Jref !== undefined ? Math.abs(J - Jref) / Math.max(1, Math.abs(Jref)) : null,
      finalTimeAbs: tf !== null && tfRef !== undefined ? Math.abs(tf - tfRef) : null,
      stateMax: trajectoryError(problem, answer, problem.states.map((s) => s.name), (a) => a.states),
      controlMax: trajectoryError(problem, answer, problem.controls.map((c) => c.name), (a) => a.controls),
    },
  };
}

export const createExecutor: CreateExecutor = (context) => {
  const command = context.options.command as string[];
  const repository = context.options.repository as string;
  const timeoutMs = ((context.options.timeoutSeconds as number | undefined) ?? 600) * 1000;
  if (!Array.isArray(command) || command.length === 0) throw new Error("external solver: options.command must be a non-empty argv array");
  const library = new ProblemLibrary(context.libraryRoots);
  return {
    prepare(spec) {
      const loaded = loadFromLibrary(library, spec.problemId);
      if (!loaded.ok) throw new Error(`problem ${spec.problemId} does not load: ${loaded.errors.map((e) => e.message).join("; ")}`);
      const problem = loaded.problem;
      // The problem.json text the loader compiled (same version hash), passed through as JSON.
      const problemJson = JSON.parse(library.files(spec.problemId)!.problemJson) as unknown;
      const request = JSON.stringify({
        protocol: PROTOCOL,
        case: { key: spec.key, problemId: spec.problemId, scheme: spec.scheme, mesh: { intervals: spec.intervals, ...(spec.degree !== undefined ? { degree: spec.degree } : {}), ...(spec.variant ? { variant: spec.variant } : {}) } },
        problemVersionHash: problem.versionHash,
        problem: problemJson,
      });
      return {
        solve(): CaseReport {
          const r = spawnSync(command[0], command.slice(1), { cwd: repository, input: request, encoding: "utf8", timeout: timeoutMs, maxBuffer: 64 * 2 ** 20 });
          const fail = (message: string): CaseReport => reportFromResponse(problem, spec, { protocol: PROTOCOL, status: "error", message });
          if (r.error) return fail(`could not run ${command.join(" ")}: ${r.error.message}`);
          if (r.status !== 0) return fail(`${command.join(" ")} exited with code ${r.status}: ${r.stderr.trim().slice(-500)}`);
          let raw: unknown;
          try {
            raw = JSON.parse(r.stdout);
          } catch {
            return fail(`standard output is not one JSON document: ${r.stdout.slice(0, 200)}`);
          }
          const parsed = solverResponseSchema.safeParse(raw);
          if (!parsed.success) return fail(`response does not follow ${PROTOCOL}: ${parsed.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`).join("; ")}`);
          return reportFromResponse(problem, spec, parsed.data);
        },
      };
    },
  };
};
