/**
 * The refine command:
 *   npm run --silent refine -- <problem folder, problem.json or id> [--scheme S] [--intervals N]
 *        [--degree K] [--segments M] [--tolerance T] [--max-iter I] [--gap-tol G] [--no-retry] [--json]
 *
 * Direct solve with the scheme (default hermite-simpson) at the mesh (default: the problem's
 * defaults, else 50 intervals), arc detection, then indirect multiple shooting
 * (app/engine/shooting/refine-problem.ts). The Newton history goes to stderr; stdout gets a
 * readable summary, or with --json one object: status, residual, objective, final time, arcs with
 * junction times, refined trajectory, provenance. --no-retry stops after the first attempt (no
 * boundary arc added for a violated constraint, no doubled segments). Exit status: 0 when the refinement converged
 * (Newton converged AND the structure is confirmed: no bound or path constraint exceeded), 1
 * otherwise (status says why; or the direct solve failed), 2 for a bad problem file or option;
 * --help prints the usage and exits 0. --gap-tol sets the direct solve's duality-gap tolerance
 * (NLP option gapTol; 0 is the stop without the gap test, which leaves the seed a barrier-sized
 * distance inside its bounds).
 */
import { numberFlagParser } from "./cli/number-flag";
import { isEntryScript } from "./cli/entry";
import { SCHEME_IDS, isSchemeId } from "../app/engine/schemes/ids";
import type { SchemeId } from "../app/engine/schemes/types";
import type { RefineProblemOptions, RefineProblemReport } from "../app/engine/shooting/refine-problem";

const USAGE = `usage: npm run --silent refine -- <problem folder | problem.json | id> [--scheme <${SCHEME_IDS.join("|")}>]
       [--intervals N] [--degree K] [--segments M] [--tolerance T] [--max-iter I] [--gap-tol G] [--no-retry] [--json]`;

interface Args extends RefineProblemOptions {
  target: string;
  json: boolean;
}

function parseArgs(argv: string[]): { args?: Args; errors: string[] } {
  const errors: string[] = [];
  const a: Partial<Args> = { json: false };
  const positional: string[] = [];
  const num = numberFlagParser(errors);
  for (let i = 0; i < argv.length; i++) {
    const s = argv[i];
    switch (s) {
      case "--scheme": {
        const v = argv[++i];
        if (v === undefined) errors.push("--scheme: a value is required");
        else if (!isSchemeId(v)) errors.push(`--scheme: unknown scheme "${v}" (known: ${SCHEME_IDS.join(", ")})`);
        else a.scheme = v as SchemeId;
        break;
      }
      case "--intervals":
        a.intervals = num(s, argv[++i], true, 1);
        break;
      case "--degree":
        a.degree = num(s, argv[++i], true, 1);
        break;
      case "--segments":
        a.segments = num(s, argv[++i], true, 1);
        break;
      case "--tolerance":
        a.tol = num(s, argv[++i], false, 0);
        if (a.tol === 0) errors.push("--tolerance: must be positive");
        break;
      case "--max-iter":
        a.maxIter = num(s, argv[++i], true, 0);
        break;
      case "--gap-tol":
        a.nlp = { ...a.nlp, gapTol: num(s, argv[++i], false, 0) };
        break;
      case "--json":
        a.json = true;
        break;
      case "--no-retry":
        a.retry = false;
        break;
      case "--help":
      case "-h":
        errors.push("help");
        break;
      default:
        if (s.startsWith("-")) errors.push(`unknown option ${s}`);
        else positional.push(s);
    }
  }
  if (positional.length !== 1) errors.push(positional.length === 0 ? "a problem folder, file or id is required" : `exactly one problem expected, got ${positional.join(" ")}`);
  if (a.degree !== undefined && a.scheme !== "lgr") errors.push("--degree applies to --scheme lgr only");
  if (errors.length > 0) return { errors };
  return { args: { ...(a as Args), target: positional[0] }, errors };
}

const fix = (v: number, digits = 13) => (Number.isFinite(v) ? v.toPrecision(digits) : String(v));

function summary(r: RefineProblemReport, title: string): string {
  const L: string[] = [];
  L.push(`${r.problemId} — ${title}`);
  L.push(`  version      ${r.problemVersion.slice(0, 12)}`);
  L.push(`  seed         ${r.provenance.kind === "shooting" ? r.provenance.detail.replace("refined by shooting from ", "") : ""}: ${r.direct.status}, objective ${r.direct.objective === null ? "—" : fix(r.direct.objective, 10)}, ${r.direct.seconds.toFixed(2)} s`);
  L.push(`  detected     ${r.detectedSignature || "—"}`);
  L.push(`  status       ${r.status} (${r.message})`);
  L.push(`  residual     ${r.residual.toExponential(2)} after ${r.iterations} Newton iterations (Jacobian condition ${r.jacobianCondition.toExponential(1)})`);
  L.push(`  objective    ${fix(r.objective)}`);
  L.push(`  final time   ${fix(r.finalTime)}`);
  L.push(`  structure    ${r.signature || "—"} (${r.structureConfirmed ? "confirmed" : "not confirmed"})`);
  for (const a of r.arcs) L.push(`    ${a.kinds.join(", ").padEnd(24)} ${fix(a.t0)} → ${fix(a.t1)}`);
  for (const v of r.violations) L.push(`  violation    ${v}`);
  for (const a of r.attempts) L.push(`  attempt      ${a}`);
  L.push(`  time         ${r.seconds.toFixed(2)} s, ${r.rhsEvaluations} right-hand-side evaluations`);
  return L.join("\n");
}

export async function main(argv: string[] = process.argv.slice(2)): Promise<number> {
  const parsed = parseArgs(argv);
  if (!parsed.args) {
    // --help prints the usage and succeeds, whatever else is (or is not) on the line
    const onlyHelp = parsed.errors.includes("help");
    if (!onlyHelp) for (const e of parsed.errors.filter((x) => x !== "help")) process.stderr.write(`error: ${e}\n`);
    (onlyHelp ? process.stdout : process.stderr).write(`${USAGE}\n`);
    return onlyHelp ? 0 : 2;
  }
  const args = parsed.args;
  // the engine is loaded only now, so that usage errors and --help answer at once
  const [{ loadProblem }, { formatProblemError }, { refineProblem }] = await Promise.all([
    import("../app/engine/problem/load"),
    import("../app/engine/problem/errors"),
    import("../app/engine/shooting/refine-problem"),
  ]);
  const loaded = loadProblem(args.target);
  if (!loaded.ok) {
    for (const e of loaded.errors) process.stderr.write(`${formatProblemError(e)}\n`);
    return 2;
  }
  const problem = loaded.problem;
  process.stderr.write(`refining ${problem.id}\n iter    residual       step  alpha\n`);
  const r = refineProblem(problem, {
    ...args,
    onIteration: (h) =>
      process.stderr.write(`${String(h.iter).padStart(5)}  ${h.residual.toExponential(3).padStart(10)}  ${h.step.toExponential(2).padStart(9)}  ${h.alpha === 0 ? "-" : h.alpha.toString()}\n`),
  });
  if (r.status === "setup_failed") process.stderr.write(`error: ${r.message}\n`);
  if (args.json) {
    const { history, ...rest } = r;
    process.stdout.write(`${JSON.stringify({ ...rest, history })}\n`);
  } else process.stdout.write(`${summary(r, problem.title)}\n`);
  return r.converged ? 0 : 1;
}

if (isEntryScript(import.meta.url)) process.exitCode = await main();
