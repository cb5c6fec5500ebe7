/**
 * COPS Goddard as the reference program (../shared/peers/goddard_ipopt.cpp) states it, for
 * bench/side-by-side-child.ts and the solver tests that use the same start: the fixture
 * tests/schemes/fixtures/cops-goddard.json with unit scales, t_f free in [1e-3, 10] from 1, and the
 * COPS starting point h = 1, v = s(1 − s), m = 1 − 0.4 s, T = 1.75 at s = τ (Dolan, Moré and
 * Munson, Benchmarking Optimization Software with COPS 3.0, ANL/MCS-TM-273, 2004).
 */
import { readFileSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { compileProblemSource } from "../app/engine/problem/compile";

export const COPS_GODDARD_FIXTURE = path.join(path.dirname(fileURLToPath(import.meta.url)), "../tests/schemes/fixtures/cops-goddard.json");

export function copsGoddardFromCopsStart(fixturePath = COPS_GODDARD_FIXTURE) {
  const fixture = JSON.parse(readFileSync(fixturePath, "utf8"));
  for (const s of [...fixture.states, ...fixture.controls]) s.scale = 1;
  fixture.horizon.finalTime.free = { lower: 1e-3, upper: 10, guess: 1 };
  const compiled = compileProblemSource("cops-goddard-side-by-side", { problemJson: JSON.stringify(fixture) });
  if (!compiled.ok) throw new Error(`cops-goddard fixture (${fixturePath}) does not compile: ${JSON.stringify(compiled.errors)}`);
  return {
    ...compiled.problem,
    guess: { tf: 1, at(tau: number, out: Float64Array) { out[0] = 1; out[1] = tau * (1 - tau); out[2] = 1 - 0.4 * tau; out[3] = 1.75; } },
  };
}
