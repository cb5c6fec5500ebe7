/**
 * Heap allocation of a steady solve, per function: what V8 allocates on the JavaScript heap while
 * the engine solves COPS Goddard from the reference program's start (bench/side-by-side-problem.ts),
 * after enough solves of the same mesh for the code to be optimised. A loop that boxes its doubles
 * (a heap number per value) shows here as megabytes under the function that holds it, long before
 * its cost shows in a CPU profile. Typed arrays count only their small JS objects (their storage is
 * outside the heap).
 *
 * Run: npx tsx bench/allocation.bench.ts [--scheme trapezoidal|hermite-simpson] [--n 1600] [--top 12]
 *
 * Method: V8's sampling heap profiler (inspector HeapProfiler.startSampling, one sample per 4 KiB
 * allocated on average, including the objects that minor and major GCs have already collected), over
 * six solves after six untimed ones, each with its own transcription (all made before the sampled
 * window) and the analysis cache emptied as in the side-by-side bench. Figures are per solve.
 * They vary between runs of the same code: a kernel can allocate nothing in one run and 10 MB a
 * solve in the next, depending on how V8 compiled it that time (DEVELOPERS.md, Decisions, Engine,
 * "No boxed doubles…", "Open"). Run it more than once before reading a figure as the code's own.
 */
import { Session } from "node:inspector/promises";
import { copsGoddardFromCopsStart } from "./side-by-side-problem";
import { getScheme, isSchemeId } from "../app/engine/schemes/index";
import { solveNlp } from "../app/engine/nlp/index";
import { clearAnalysisCache } from "../app/engine/sparse/index";

const argv = process.argv.slice(2);
const arg = (name: string, fallback: string): string => {
  const i = argv.indexOf(`--${name}`);
  return i >= 0 && argv[i + 1] !== undefined ? argv[i + 1]! : fallback;
};
const scheme = arg("scheme", "trapezoidal");
if (!isSchemeId(scheme)) throw new Error(`allocation.bench: --scheme ${scheme} is not a scheme`);
const N = Number(arg("n", "1600"));
const top = Number(arg("top", "12"));
if (!Number.isInteger(top) || top < 1) throw new Error(`allocation.bench: --top must be an integer ≥ 1, got ${arg("top", "")}`);
if (!Number.isInteger(N) || N < 2) throw new Error(`allocation.bench: --n must be an integer ≥ 2, got ${arg("n", "")}`);

const WARM = 6, TIMED = 6;
const problem = copsGoddardFromCopsStart();
// Every transcription is made before the sampled window, so that the figures are the solves' own.
const transcriptions = Array.from({ length: WARM + TIMED }, () => getScheme(scheme).transcribe(problem, { intervals: N }));
let next = 0;
const solveOnce = (): { iterations: number; status: string } => {
  const tr = transcriptions[next++]!;
  clearAnalysisCache();
  const r = solveNlp(tr.nlp, { tol: 1e-8 });
  return { iterations: r.iterations, status: r.status };
};
for (let k = 0; k < WARM; k++) {
  solveOnce();
  process.stdout.write(`\rwarm-up solve ${k + 1}/${WARM}`);
}

interface SamplingNode { callFrame: { functionName: string; url: string; lineNumber: number }; selfSize: number; children: SamplingNode[] }
const session = new Session();
session.connect();
// The two include… flags are missing from Node 20's inspector typings; its V8 honours them (without
// them the profile keeps only what is still alive when sampling stops).
await session.post("HeapProfiler.startSampling", {
  samplingInterval: 4096,
  includeObjectsCollectedByMajorGC: true,
  includeObjectsCollectedByMinorGC: true,
} as { samplingInterval: number });
let last = { iterations: 0, status: "" };
for (let k = 0; k < TIMED; k++) {
  last = solveOnce();
  process.stdout.write(`\rsampled solve ${k + 1}/${TIMED}  `);
}
const { profile } = (await session.post("HeapProfiler.stopSampling")) as { profile: { head: SamplingNode } };
session.disconnect();
process.stdout.write("\r");

const byFunction = new Map<string, number>();
let total = 0;
const walk = (node: SamplingNode): void => {
  const file = node.callFrame.url.split("/").pop() || "(native)";
  const key = `${node.callFrame.functionName || "(anonymous)"}  ${file}:${node.callFrame.lineNumber + 1}`;
  byFunction.set(key, (byFunction.get(key) ?? 0) + node.selfSize);
  total += node.selfSize;
  for (const c of node.children) walk(c);
};
walk(profile.head);

console.log(`COPS Goddard, ${scheme} N = ${N}: ${last.iterations} iterations (${last.status}); heap allocated per steady solve ${(total / TIMED / 1e6).toFixed(2)} MB`);
console.log("     KB/solve  function (file:line of its start)");
for (const [k, v] of [...byFunction.entries()].sort((a, b) => b[1] - a[1]).slice(0, top)) {
  console.log(`${(v / TIMED / 1e3).toFixed(0).padStart(13)}  ${k}`);
}
