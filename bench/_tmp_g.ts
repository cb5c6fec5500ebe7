import { readFileSync } from "node:fs";
import { compileProblemSource } from "~/engine/problem/compile";
import { solveProblem } from "~/engine/solve";
const j = JSON.parse(readFileSync("tests/schemes/fixtures/cops-goddard.json", "utf8"));
const variant = process.argv[2];
if (variant === "csv") j.guess = { kind: "trajectory", file: "guess.csv", finalTime: 0.2 };
const r = compileProblemSource("g", { problemJson: JSON.stringify(j), guessCsv: readFileSync("tests/schemes/fixtures/cops-goddard-guess.csv", "utf8") });
if (!r.ok) { console.log(r.errors); process.exit(1); }
for (const N of process.argv.slice(3).map(Number)) for (const s of ["trapezoidal", "hermite-simpson"]) {
  const rep = solveProblem(r.problem, s as any, { intervals: N }, { keepTrajectory: false, resimulate: false, nlp: { maxIter: 300 } });
  console.log(variant, s, N, rep.status, rep.iterations, rep.solveSeconds.toFixed(2), rep.objective);
}
