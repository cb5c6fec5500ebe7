/**
 * Start-up cost of the command line as whole processes (node bench/cli-start.bench.mjs [rounds]):
 * the built command (scripts/arcwatch.mjs → dist/cli) against the same command run from the
 * TypeScript sources through tsx (how `npm run solve` ran before the build existed), interleaved
 * round by round so that both see the same load on a shared machine. Prints the median wall
 * time and, where GNU time is installed, the median CPU time (user + system) of each, and
 * the ratios. Targets (issue 14): `--help` under 0.3 s, a 20-interval trapezoidal solve of a
 * library problem under 1.5 s.
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { buildCli, cliState } from "../scripts/build-cli.mjs";

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const rounds = Number(process.argv[2] ?? 5);
const GNU_TIME = fs.existsSync("/usr/bin/time") ? "/usr/bin/time" : null;
const SOLVE = ["pika-rover-dash", "--scheme", "trapezoidal", "--intervals", "20", "--quiet"];

const cases = [
  { label: "arcwatch --help", built: ["scripts/arcwatch.mjs", "--help"], source: null },
  { label: "solve --help", built: ["scripts/arcwatch.mjs", "solve", "--help"], source: ["--import", "tsx", "bench/solve.ts", "--help"] },
  { label: "bench --help", built: ["scripts/arcwatch.mjs", "bench", "--help"], source: ["--import", "tsx", "bench/run.ts", "--help"] },
  { label: "solve, trapezoidal, 20 intervals", built: ["scripts/arcwatch.mjs", "solve", ...SOLVE], source: ["--import", "tsx", "bench/solve.ts", ...SOLVE] },
  { label: "empty node process (floor)", built: ["-e", "0"], source: null },
];

function once(args) {
  const cmd = GNU_TIME ? GNU_TIME : process.execPath;
  const full = GNU_TIME ? ["-f", "%U %S", process.execPath, ...args] : args;
  const t0 = performance.now();
  const r = spawnSync(cmd, full, { cwd: ROOT, encoding: "utf8" });
  const wall = (performance.now() - t0) / 1000;
  let cpu = null;
  if (GNU_TIME) {
    const m = /([\d.]+) ([\d.]+)\s*$/.exec(r.stderr);
    if (m) cpu = Number(m[1]) + Number(m[2]);
  }
  return { wall, cpu };
}

const median = (xs) => {
  const s = xs.filter((x) => x !== null).sort((a, b) => a - b);
  return s.length ? s[s.length >> 1] : null;
};
const fmt = (x) => (x === null ? "—" : x.toFixed(2));

if (cliState(ROOT) !== "fresh") await buildCli(ROOT);
const samples = cases.map(() => ({ built: [], source: [] }));
for (let r = 0; r < rounds; r++) {
  cases.forEach((c, i) => {
    samples[i].built.push(once(c.built));
    if (c.source) samples[i].source.push(once(c.source));
  });
  process.stderr.write(`round ${r + 1}/${rounds}\n`);
}
console.log(`median of ${rounds} interleaved runs, seconds${GNU_TIME ? "" : " (CPU times need /usr/bin/time)"}; load average ${(await import("node:os")).loadavg().map((x) => x.toFixed(1)).join(" ")}`);
console.log(`${"command".padEnd(34)} ${"built wall".padStart(10)} ${"built cpu".padStart(10)} ${"tsx wall".padStart(10)} ${"tsx cpu".padStart(10)} ${"wall ratio".padStart(10)}`);
cases.forEach((c, i) => {
  const bw = median(samples[i].built.map((s) => s.wall));
  const bc = median(samples[i].built.map((s) => s.cpu));
  const sw = c.source ? median(samples[i].source.map((s) => s.wall)) : null;
  const sc = c.source ? median(samples[i].source.map((s) => s.cpu)) : null;
  console.log(`${c.label.padEnd(34)} ${fmt(bw).padStart(10)} ${fmt(bc).padStart(10)} ${fmt(sw).padStart(10)} ${fmt(sc).padStart(10)} ${(sw === null ? "—" : (bw / sw).toFixed(2)).padStart(10)}`);
});
