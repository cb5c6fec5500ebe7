/**
 * vitest globalSetup: builds the command line (dist/cli, scripts/build-cli.mjs) once before any
 * test file runs when it is missing or older than its sources, so tests that start
 * `scripts/arcwatch.mjs` never race to rebuild it in parallel and never run a stale build.
 */
import { buildCli, cliState } from "../../scripts/build-cli.mjs";

export default async function setup(): Promise<void> {
  if (cliState() !== "fresh") await buildCli();
}
