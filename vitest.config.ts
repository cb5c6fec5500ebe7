import { defineConfig } from "vitest/config";
import { fileURLToPath } from "node:url";

// Unit and integration tests run in Node; browser tests (tests/browser) start the built
// server themselves and drive Debian's chromium through playwright-core.
// Tests whose verdict rests on measured solve times (planted slowdowns found, unchanged
// reruns quiet) run last and one file at a time: beside other test files on two cores,
// an unchanged rerun's cases moved by up to ×1.5 (tests/runner/power-e2e.test.ts, full run
// 2026-12-02), which is the machine's noise, not the detector's.
const TIMED = ["tests/runner/e2e.test.ts", "tests/runner/bisect.test.ts", "tests/runner/ab-confirm.test.ts", "tests/runner/power-e2e.test.ts"];

export default defineConfig({
  resolve: { alias: { "~": fileURLToPath(new URL("./app", import.meta.url)) } },
  test: {
    environment: "node",
    testTimeout: 60_000,
    hookTimeout: 180_000,
    pool: "forks",
    // builds the command line (dist/cli) when stale, before the tests that start scripts/arcwatch.mjs
    globalSetup: ["tests/helpers/build-cli.setup.ts"],
    projects: [
      { extends: true, test: { name: "main", include: ["tests/**/*.test.ts"], exclude: TIMED, sequence: { groupOrder: 0 } } },
      { extends: true, test: { name: "timed", include: TIMED, fileParallelism: false, sequence: { groupOrder: 1 } } },
    ],
  },
});
