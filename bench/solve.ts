/**
 * The solve command:
 *   npm run --silent solve -- <problem folder, problem.json or id> --scheme <id> [--intervals N]
 *        [--degree K] [--variant V] [--tolerance T] [--max-iter M] [--json] [--quiet] [--no-resim]
 *        [--mesh uniform|adaptive] [--max-passes P] [--nlp-tolerance T]
 * With --mesh adaptive the mesh is refined until the error estimate of every interval is at most
 * --tolerance (app/engine/mesh/adaptive.ts); the NLP tolerance is then --nlp-tolerance (default
 * the solver's). The intervals (and degree) give the first mesh.
 *
 * Live iteration log on stderr; then a readable summary on stdout, or with --json one JSON object
 * (the engine's SolveReport, app/engine/solve.ts). Exit status: 0 when the solver reports optimal
 * or acceptable, 1 for any other solver status, 2 for a bad problem file or option (the validation
 * errors are printed on stderr).
 */
import { existsSync, readFileSync } from "node:fs";
import path from "node:path";
import { numberFlagParser } from "./cli/number-flag";
import { isEntryScript } from "./cli/entry";
import { SCHEME_IDS, isSchemeId } from "../app/engine/schemes/ids";
import type { SolveReport } from "../app/engine/solve";
import type { NlpOptions } from "../app/engine/nlp/types";
import { terminalLogPrinter } from "../app/engine/nlp/iteration-log";
import type { Mesh } from "../app/engine/schemes/types";
import { solveAdaptive } from "../app/engine/mesh/adaptive";
import { passLine, refinementLines } from "../app/engine/mesh/summary";

const USAGE = `usage: npm run --silent solve -- <problem folder | problem.json | id> --scheme <${SCHEME_IDS.join("|")}>
       [--intervals N] [--degree K] [--variant V] [--tolerance T] [--max-iter M] [--json] [--quiet] [--no-resim]
       [--mesh uniform|adaptive] [--max-passes P] [--nlp-tolerance T]   (adaptive: --tolerance is the mesh error tolerance)`;

interface Args {
  target: string;
  scheme: string;
  intervals?: number;
  degree?: number;
  variant?: string;
  tolerance?: number;
  maxIter?: number;
  json: boolean;
  quiet: boolean;
  resim: boolean;
  mesh: "uniform" | "adaptive";
  maxPasses?: number;
  nlpTolerance?: number;
}

function parseArgs(argv: string[]): { args?: Args; errors: string[] } {
  const errors: string[] = [];
  const a: Partial<Args> = { json: false, quiet: false, resim: true, mesh: "uniform" };
  const positional: string[] = [];
  const num = numberFlagParser(errors);
  for (let i = 0; i < argv.length; i++) {
    const s = argv[i];
    switch (s) {
      case "--scheme":
        a.scheme = argv[++i];
        if (a.scheme === undefined) errors.push("--scheme: a value is required");
        break;
      case "--intervals":
        a.intervals = num(s, argv[++i], true, 1);
        break;
      case "--degree":
        a.degree = num(s, argv[++i], true, 1);
        break;
      case "--variant":
        a.variant = argv[++i];
        if (a.variant === undefined) errors.push("--variant: a value is required");
        break;
      case "--tolerance":
        a.tolerance = num(s, argv[++i], false, 0);
        if (a.tolerance === 0) errors.push("--tolerance: must be positive");
        break;
      case "--max-iter":
        a.maxIter = num(s, argv[++i], true, 0);
        break;
      case "--mesh": {
        const v = argv[++i];
        if (v === "uniform" || v === "adaptive") a.mesh = v;
        else errors.push(`--mesh: expected uniform or adaptive, got ${v === undefined ? "nothing" : `"${v}"`}`);
        break;
      }
      case "--max-passes":
        a.maxPasses = num(s, argv[++i], true, 1);
        break;
      case "--nlp-tolerance":
        a.nlpTolerance = num(s, argv[++i], false, 0);
        if (a.nlpTolerance === 0) errors.push("--nlp-tolerance: must be positive");
        break;
      case "--json":
        a.json = true;
        break;
      case "--quiet":
        a.quiet = true;
        break;
      case "--no-resim":
        a.resim = false;
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
  if (!a.scheme) errors.push("--scheme is required");
  else if (!isSchemeId(a.scheme)) errors.push(`--scheme: unknown scheme "${a.scheme}" (known: ${SCHEME_IDS.join(", ")})`);
  if (a.degree !== undefined && a.scheme && a.scheme !== "lgr") errors.push("--degree applies to --scheme lgr only");
  if (a.mesh === "adaptive" && a.tolerance === undefined && !errors.some((e) => e.startsWith("--tolerance"))) errors.push("--mesh adaptive: --tolerance (the mesh error tolerance) is required");
  if (a.mesh !== "adaptive" && (a.maxPasses !== undefined || a.nlpTolerance !== undefined)) errors.push("--max-passes and --nlp-tolerance apply to --mesh adaptive only");
  if (errors.length > 0) return { errors };
  return { args: { ...(a as Args), target: positional[0] }, errors };
}

const fmt = (v: number | null | undefined, digits = 3) => (v === null || v === undefined ? "—" : Number.isFinite(v) ? v.toExponential(digits) : String(v));
const fix = (v: number | null | undefined, digits = 10) => (v === null || v === undefined ? "—" : v.toPrecision(digits));

function summary(rep: SolveReport, title: string): string {
  const L: string[] = [];
  const e = rep.errors;
  L.push(`${rep.problemId} — ${title}`);
  L.push(`  version      ${rep.versionHash.slice(0, 12)}`);
  L.push(`  scheme       ${rep.scheme}, ${rep.intervals} intervals${rep.degree !== null ? `, degree ${rep.degree}` : ""}${rep.variant ? `, ${rep.variant}` : ""}`);
  L.push(`  NLP          n = ${rep.nlpSize.n}, m = ${rep.nlpSize.m}, Jacobian nnz = ${rep.nlpSize.jacNnz}, Hessian nnz = ${rep.nlpSize.hessNnz}`);
  L.push(`  status       ${rep.status} (${rep.message})`);
  L.push(`  iterations   ${rep.iterations}`);
  L.push(`  time         solve ${rep.solveSeconds.toFixed(3)} s, transcribe ${rep.transcribeSeconds.toFixed(3)} s`);
  L.push(`  objective    ${fix(rep.objective)}`);
  L.push(`  final time   ${fix(rep.finalTime)}`);
  L.push(`  violation    ${fmt(rep.constraintViolation)}`);
  if (rep.resim) L.push(`  re-simulated final miss ${fmt(rep.resim.finalMiss)} (scaled), path violation ${fmt(rep.resim.maxPathViolation)}`);
  if (rep.meshEstimate) L.push(`  mesh error   largest interval estimate ${fmt(rep.meshEstimate.max)} (${rep.meshEstimate.method}, ${rep.meshEstimate.error.length} intervals)`);
  L.push(`  vs reference objective ${fmt(e.objectiveAbs)} (rel ${fmt(e.objectiveRel)}), final time ${fmt(e.finalTimeAbs)}, states ${fmt(e.stateMax)}, controls ${fmt(e.controlMax)}, costates ${fmt(e.costateMax)}, switching ${fmt(e.switchingTimes)}`);
  const sp = rep.errorSplit;
  if (sp.solver !== null)
    L.push(`  objective error split: solver ≤ ${fmt(sp.solver)} (duality gap), discretisation ${sp.discretisation !== null ? `≈ ${fmt(sp.discretisation)}` : "not separable (error at the solver's level)"}`);
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
  const [{ loadProblem }, { compileProblemSource }, { formatProblemError }, { isConverged, solveProblem }] = await Promise.all([
    import("../app/engine/problem/load"),
    import("../app/engine/problem/compile"),
    import("../app/engine/problem/errors"),
    import("../app/engine/solve"),
  ]);
  // a problem.json (or its folder, or an id) goes through the library loader; any other .json file
  // (e.g. a test fixture) is compiled on its own, with its file name as the id
  const loose = args.target.endsWith(".json") && path.basename(args.target) !== "problem.json" && existsSync(args.target);
  const loaded = loose
    ? compileProblemSource(path.basename(args.target, ".json"), { problemJson: readFileSync(args.target, "utf8") }, args.target)
    : loadProblem(args.target);
  if (!loaded.ok) {
    for (const e of loaded.errors) process.stderr.write(`${formatProblemError(e)}\n`);
    return 2;
  }
  const problem = loaded.problem;
  const scheme = args.scheme as (typeof SCHEME_IDS)[number];
  const mesh: Mesh = { intervals: args.intervals ?? problem.defaults?.intervals ?? 40 };
  if (scheme === "lgr") mesh.degree = args.degree ?? problem.defaults?.degree;
  if (args.variant) mesh.variant = args.variant;
  const nlp: NlpOptions = {};
  if (args.mesh === "adaptive") {
    if (args.nlpTolerance !== undefined) nlp.tol = args.nlpTolerance;
  } else if (args.tolerance !== undefined) nlp.tol = args.tolerance;
  if (args.maxIter !== undefined) nlp.maxIter = args.maxIter;
  if (!args.quiet) {
    process.stderr.write(`solving ${problem.id} with ${scheme}, ${mesh.intervals} intervals${mesh.degree ? ` × degree ${mesh.degree}` : ""}\n`);
    nlp.onIteration = terminalLogPrinter((line) => process.stderr.write(`${line}\n`));
  }
  if (args.mesh === "adaptive") {
    const ad = solveAdaptive(problem, scheme, mesh, {
      nlp, resimulate: args.resim, tolerance: args.tolerance!, maxPasses: args.maxPasses,
      onPass: args.quiet ? undefined : (p) => process.stderr.write(`${passLine(p)}\n`),
    });
    const { final, ...refinement } = ad;
    if (args.json) process.stdout.write(`${JSON.stringify({ ...final, refinement })}\n`);
    else process.stdout.write(`${summary(final, problem.title)}\n${refinementLines(ad).join("\n")}\n`);
    return ad.met ? 0 : 1;
  }
  const rep = solveProblem(problem, scheme, mesh, { nlp, resimulate: args.resim });
  if (rep.status === "invalid_model" && rep.message.startsWith("transcription failed")) {
    process.stderr.write(`error: ${rep.message}\n`);
    return 2;
  }
  if (args.json) process.stdout.write(`${JSON.stringify(rep)}\n`);
  else process.stdout.write(`${summary(rep, problem.title)}\n`);
  return isConverged(rep.status) ? 0 : 1;
}

if (isEntryScript(import.meta.url)) process.exitCode = await main();
