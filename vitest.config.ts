import { defineConfig } from "vitest/config";
import { fileURLToPath } from "node:url";

// Unit and integration tests run in Node; browser tests (tests/browser) start the built
// server themselves and drive Debian's chromium through playwright-core.
export default defineConfig({
  resolve: { alias: { "~": fileURLToPath(new URL("./app", import.meta.url)) } },
  test: {
    include: ["tests/**/*.test.ts"],
    environment: "node",
    testTimeout: 60_000,
    hookTimeout: 180_000,
    pool: "forks",
    // builds the command line (dist/cli) when stale, before the tests that start scripts/arcwatch.mjs
    globalSetup: ["tests/helpers/build-cli.setup.ts"],
  },
});
