/**
 * npm run bench -- --suite <name|file> [--baseline <commit|branch>] [--upload <url> --token <token>]
 *                  [--db <path>] [--jobs <n>] [--json] [--no-alerts] [--base-url <url>] [--job <id>]
 *
 * Runs a suite on the current checkout, records it in SQLite (ARCWATCH_DB or --db), compares it
 * with the baseline and prints a summary table (or, with --json, one JSON document on stdout).
 * `--job <id>` links the run to a jobs row (the server's job worker runs this command in a worktree).
 * Exit codes: 0 fine, 3 new regression(s), 130 interrupted (SIGINT/SIGTERM), 1 error, 2 bad usage.
 * With ARCWATCH_EVENTS_FD=<n> the progress is also written as JSON lines to file descriptor n
 * (app/runs/events.ts; the job worker reads it).
 */

/** The events sink named by ARCWATCH_EVENTS_FD, or null. */
function eventsSink(): { write(line: string): void } | null {
  const raw = process.env[RUN_EVENTS_FD_ENV];
  if (!raw) return null;
  const fd = Number(raw);
  if (!Number.isInteger(fd) || fd < 3) return null;
  return { write: (line) => void fs.writeSync(fd, line) };
}
import fs from "node:fs";
import { parseArgs } from "node:util";
import { closeDb, getDb, openDatabase } from "../app/db/client.server";
import { stopStandin } from "../app/services/mail.server";
import { RUN_EVENTS_FD_ENV } from "../app/runs/events";
import type { RunSummary } from "./runner/run-suite";
import { renderTable, fmtNum, tally } from "./runner/table";

const USAGE = "usage: npm run bench -- --suite <name|file> [--baseline <commit|branch>] [--upload <url> --token <token>] [--db <path>] [--jobs <n>] [--json] [--no-alerts]";

function summaryText(s: RunSummary): string {
  const rows = s.outcomes.map((o) => [
    o.spec.key,
    o.status,
    fmtNum(o.report?.objective),
    fmtNum(o.report?.errors?.objectiveRel),
    fmtNum(o.report?.errors?.stateMax),
    o.report?.iterations === null || o.report?.iterations === undefined ? "—" : String(o.report.iterations),
    o.samples.length ? `${fmtNum([...o.samples].sort((a, b) => a - b)[o.samples.length >> 1])} s` : "—",
  ]);
  const parts = [renderTable(["case", "status", "objective", "obj err", "state err", "iter", "median"], rows)];
  const t = tally(s.outcomes);
  parts.push(
    "",
    `run ${s.runId} · ${s.status} · suite ${s.suite.name} (${s.suite.contentHash.slice(0, 12)}) · commit ${s.commit.commitHash.slice(0, 10)}${s.commit.dirty ? " (dirty)" : ""} on ${s.commit.branch ?? "(detached)"}`,
    `${s.outcomes.length}/${s.suite.cases} cases: ${t.solved} solved, ${t.failed} failed, ${t.timeouts} timeouts, ${t.errors} errors · ${s.elapsedSeconds.toFixed(1)} s · calibration ${fmtNum(s.calibration.before)} s → ${fmtNum(s.calibration.after)} s`,
  );
  const d = s.detection;
  if (!d) parts.push("no regression check (run not complete)");
  else if (!d.baselineRunId && d.findings.length === 0) parts.push("no baseline run found: nothing to compare with yet");
  else {
    parts.push(`baseline: ${d.baselineRunId ? `run ${d.baselineRunId} at ${d.baselineCommit?.slice(0, 10)}` : "none"}`);
    if (d.findings.length === 0) parts.push("no regressions or improvements");
    else {
      parts.push(
        "",
        renderTable(
          ["kind", "direction", "case", "evidence"],
          d.findings.map((f) => [f.kind, f.direction, f.caseKey, f.detail]),
        ),
      );
      parts.push(`${d.newRegressions} new regression(s)`);
    }
  }
  if (s.alerts) parts.push(`alerts: ${s.alerts.sent.length} sent${s.alerts.errors.length ? `, ${s.alerts.errors.length} failed` : ""}`);
  return parts.join("\n");
}

async function main(): Promise<number> {
  let args;
  try {
    args = parseArgs({
      options: {
        suite: { type: "string" },
        baseline: { type: "string" },
        upload: { type: "string" },
        token: { type: "string" },
        db: { type: "string" },
        jobs: { type: "string" },
        json: { type: "boolean", default: false },
        "no-alerts": { type: "boolean", default: false },
        "base-url": { type: "string" },
        job: { type: "string" },
        help: { type: "boolean", default: false },
      },
      strict: true,
    }).values;
  } catch (err) {
    process.stderr.write(`${(err as Error).message}\n${USAGE}\n`);
    return 2;
  }
  if (args.help) {
    process.stdout.write(`${USAGE}\n`);
    return 0;
  }
  if (!args.suite) {
    process.stderr.write(`--suite is required\n${USAGE}\n`);
    return 2;
  }
  if (args.upload && !args.token) {
    process.stderr.write(`--upload needs --token\n${USAGE}\n`);
    return 2;
  }
  const jobs = args.jobs !== undefined ? Number(args.jobs) : undefined;
  if (jobs !== undefined && (!Number.isInteger(jobs) || jobs < 1)) {
    process.stderr.write(`--jobs must be a positive integer, got "${args.jobs}"\n`);
    return 2;
  }
  const jobId = args.job !== undefined ? Number(args.job) : null;
  if (jobId !== null && (!Number.isInteger(jobId) || jobId < 1)) {
    process.stderr.write(`--job must be a job id, got "${args.job}"\n`);
    return 2;
  }
  // Loaded after the arguments are checked: a usage error answers at once.
  const { runSuite } = await import("./runner/run-suite");
  const { uploadRun } = await import("./runner/upload");
  const db = args.db ? openDatabase(args.db) : getDb();
  const controller = new AbortController();
  const onSignal = (sig: string) => {
    if (controller.signal.aborted) return;
    process.stderr.write(`\n${sig}: stopping; finished cases are kept, the run is marked interrupted\n`);
    controller.abort();
  };
  process.on("SIGINT", () => onSignal("SIGINT"));
  process.on("SIGTERM", () => onSignal("SIGTERM"));
  try {
    const summary = await runSuite({
      suite: args.suite,
      db,
      baseline: args.baseline,
      jobs,
      signal: controller.signal,
      progress: args.json ? null : process.stderr,
      events: eventsSink(),
      alerts: !args["no-alerts"],
      baseUrl: args["base-url"],
      jobId,
    });
    let uploaded: { url: string; status: number } | null = null;
    if (args.upload && summary.status !== "interrupted") {
      uploaded = await uploadRun(db, summary.runId, args.upload, args.token!);
    }
    if (args.json) {
      const out = {
        runId: summary.runId,
        status: summary.status,
        exitCode: summary.exitCode,
        suite: summary.suite,
        commit: summary.commit,
        machineKey: summary.machineKey,
        calibration: summary.calibration,
        elapsedSeconds: summary.elapsedSeconds,
        counts: tally(summary.outcomes),
        cases: summary.outcomes.map((o) => ({ key: o.spec.key, status: o.status, message: o.message, objective: o.report?.objective ?? null, errors: o.report?.errors ?? null, iterations: o.report?.iterations ?? null, samples: o.samples })),
        baseline: summary.detection ? { runId: summary.detection.baselineRunId, commit: summary.detection.baselineCommit } : null,
        findings: summary.detection?.findings ?? [],
        newRegressions: summary.detection?.newRegressions ?? 0,
        alerts: summary.alerts,
        uploaded,
      };
      process.stdout.write(`${JSON.stringify(out, null, 2)}\n`);
    } else {
      process.stdout.write(`${summaryText(summary)}\n`);
      if (uploaded) process.stdout.write(`uploaded to ${uploaded.url} (HTTP ${uploaded.status})\n`);
    }
    return summary.exitCode;
  } catch (err) {
    process.stderr.write(`bench: ${(err as Error).message}\n`);
    return 1;
  } finally {
    await stopStandin();
    if (args.db) db.$client.close();
    else closeDb();
  }
}

main().then(
  (code) => process.exit(code),
  (err) => {
    process.stderr.write(`bench: ${(err as Error).stack ?? err}\n`);
    process.exit(1);
  },
);
