/**
 * npm run bench -- --suite <name|file> [--baseline <commit|branch>] [--upload <url> --token <token>]
 *                  [--db <path>] [--jobs <n>] [--json] [--no-alerts] [--confirm] [--base-url <url>] [--job <id>]
 *
 * Runs a suite on the current checkout, records it in SQLite (ARCWATCH_DB or --db), compares it
 * with the baseline and prints a summary table (or, with --json, one JSON document on stdout).
 * `--job <id>` links the run to a jobs row (the server's job worker runs this command in a worktree).
 * `--shard k/n` runs part k of n of the suite (app/runs/shards.ts; the plan is frozen per suite
 * version and machine class in the database); `--plan` prints the plan of all n parts and exits.
 * `--machine-class <label>` names the class timings are compared within (default: the machine key).
 * `--ab <base>..<head>`: interleaved A/B of two commits in their own worktrees (bench/runner/ab.ts);
 * `--bisect <good>..<bad> --cases <keys>`: the first bad commit by A/B bisection (bench/runner/bisect.ts).
 * `--confirm` (for CI runners): new speed regressions are put to an interleaved A/B of the baseline
 * commit against this one at once, in this process, and count towards the exit code only when it
 * confirms them (a cleared one is recorded with its verdict). Without it they count at once and the
 * server's job worker confirms them later (their e-mail waits). With `--upload` too, the server's
 * own check of the uploaded run counts: its speed regressions wait for the A/B job the server
 * queued (polled through GET /api/runs/:id, at most --confirm-timeout seconds, default 3600).
 * Exit codes: 0 fine, 3 new regression(s), 130 interrupted (SIGINT/SIGTERM), 1 error, 2 bad usage.
 * With ARCWATCH_EVENTS_FD=<n> the progress is also written as JSON lines to file descriptor n
 * (app/runs/events.ts; the job worker reads it).
 */

/** The events sink named by ARCWATCH_EVENTS_FD, or null. */
function eventsSink(envName: string): { write(line: string): void } | null {
  const raw = process.env[envName];
  if (!raw) return null;
  const fd = Number(raw);
  if (!Number.isInteger(fd) || fd < 3) return null;
  return { write: (line) => void fs.writeSync(fd, line) };
}
import fs from "node:fs";
import { parseArgs } from "node:util";
import { isEntryScript } from "./cli/entry";
import type { RunSummary } from "./runner/run-suite";
import { renderTable, fmtNum, tally } from "./runner/table";
import { MACHINE_CLASS_PATTERN, parseShard, renderPlan } from "../app/runs/shards";

const USAGE =
  "usage: npm run bench -- --suite <name|file> [--baseline <commit|branch>] [--upload <url> --token <token>] [--db <path>] [--jobs <n>] [--json] [--no-alerts] [--confirm [--confirm-timeout <s>]] [--shard k/n [--plan] [--pipeline <id>]] [--machine-class <label>]\n" +
  "       npm run bench -- --suite <name|file> --ab <base>..<head> [--cases <key,...>] [--blocks <n>] [--max-blocks <n>] [--groups <json>] [--json]\n" +
  "       npm run bench -- --suite <name|file> --bisect <good>..<bad> --cases <key,...> [--blocks <n>] [--json]";

function summaryText(s: RunSummary, t: ReturnType<typeof tally>): string {
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
  parts.push(
    "",
    `run ${s.runId} · ${s.status} · suite ${s.suite.name} (${s.suite.contentHash.slice(0, 12)}) · commit ${s.commit.commitHash.slice(0, 10)}${s.commit.dirty ? " (dirty)" : ""} on ${s.commit.branch ?? "(detached)"}`,
    `${s.outcomes.length}/${s.suite.cases} cases: ${t.solved} solved, ${t.failed} failed, ${t.timeouts} timeouts, ${t.errors} errors · ${s.elapsedSeconds.toFixed(1)} s · calibration ${fmtNum(s.calibration.before)} s → ${fmtNum(s.calibration.after)} s`,
  );
  const d = s.detection;
  if (!d && s.shard) parts.push(`shard ${s.shard.index} of ${s.shard.count} (${s.outcomes.length} of ${s.shard.suiteCases} cases): no regression check on a part; the server checks the merged run`);
  else if (!d) parts.push("no regression check (run not complete)");
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
  const run = (s.alerts?.checks ?? []).filter((c) => c.jobId === null);
  if (run.length && s.alerts) {
    const screened = s.alerts.screened.length ? `, ${s.alerts.screened.length} of them found by screening (a scheme no rule flagged that the A/B found slower)` : "";
    parts.push(...run.map((c) => c.note ?? `interleaved A/B: ${c.state}`), `${s.alerts.standing} new regression(s) stand after the A/B${screened}; a speed or drift regression it cleared or could not decide on does not fail this run`);
  }
  if (s.alerts?.abJobIds.length) parts.push(`speed or drift regression(s) await interleaved A/B job${s.alerts.abJobIds.length > 1 ? "s" : ""} ${s.alerts.abJobIds.join(", ")}: their e-mail goes out once it confirms them`);
  else if (s.alerts?.unconfirmed) parts.push(`speed or drift regression(s) e-mailed unconfirmed: ${s.alerts.unconfirmed}`);
  return parts.join("\n");
}

/** The server's answer to an upload in words: the merged run's shard progress, its new regressions. */
function uploadNote(body: unknown): string {
  const b = (body ?? {}) as { runId?: string; created?: boolean; newRegressions?: number; shard?: { in: number; count: number; completed: boolean; note: string | null } };
  const parts: string[] = [];
  if (b.shard) parts.push(`run ${b.runId}: ${b.shard.in} of ${b.shard.count} shards in${b.shard.completed ? ", complete; checked for regressions" : ""}${b.created === false ? " (this shard was already in)" : ""}`);
  if (b.newRegressions) parts.push(`${b.newRegressions} new regression(s) found by the server`);
  return parts.length ? ` · ${parts.join(" · ")}` : "";
}

const EXIT_REGRESSION = 3;

export async function main(argv: string[] = process.argv.slice(2)): Promise<number> {
  let args;
  try {
    args = parseArgs({
      args: argv,
      options: {
        suite: { type: "string" },
        baseline: { type: "string" },
        upload: { type: "string" },
        token: { type: "string" },
        db: { type: "string" },
        jobs: { type: "string" },
        json: { type: "boolean", default: false },
        "no-alerts": { type: "boolean", default: false },
        confirm: { type: "boolean", default: false },
        "base-url": { type: "string" },
        job: { type: "string" },
        shard: { type: "string" },
        plan: { type: "boolean", default: false },
        pipeline: { type: "string" },
        "machine-class": { type: "string" },
        ab: { type: "string" },
        bisect: { type: "string" },
        cases: { type: "string" },
        blocks: { type: "string" },
        "max-blocks": { type: "string" },
        groups: { type: "string" },
        "confirm-timeout": { type: "string", default: "3600" },
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
  const confirmTimeout = Number(args["confirm-timeout"]);
  if (!Number.isFinite(confirmTimeout) || confirmTimeout < 0) {
    process.stderr.write(`--confirm-timeout takes seconds (a number ≥ 0), got "${args["confirm-timeout"]}"\n${USAGE}\n`);
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
  let shard: { index: number; count: number } | null = null;
  if (args.shard !== undefined) {
    try {
      shard = parseShard(args.shard);
    } catch (err) {
      process.stderr.write(`${(err as Error).message}\n`);
      return 2;
    }
  }
  if (args.plan && !shard) {
    process.stderr.write(`--plan needs --shard k/n (it prints the plan of all n shards)\n${USAGE}\n`);
    return 2;
  }
  const machineClassLabel = args["machine-class"] ?? process.env.ARCWATCH_MACHINE_CLASS;
  if (machineClassLabel !== undefined && !MACHINE_CLASS_PATTERN.test(machineClassLabel)) {
    process.stderr.write(`--machine-class must be 1-64 letters, digits, dots, dashes or underscores, got "${machineClassLabel}"\n`);
    return 2;
  }
  if (shard && args.upload && !args.pipeline) {
    process.stderr.write(`--shard with --upload needs --pipeline <id>: the CI pipeline's id, the same for every shard of one run (e.g. github-$GITHUB_RUN_ID)\n`);
    return 2;
  }
  if (args.pipeline !== undefined && !/^[A-Za-z0-9._:-]{1,200}$/.test(args.pipeline)) {
    process.stderr.write(`--pipeline must be 1-200 letters, digits, '.', '_', ':' or '-', got "${args.pipeline}"\n`);
    return 2;
  }
  if (args.ab || args.bisect) return compareCommits(args);
  // the database, the runner and the engine are loaded only now, so that --help answers at once
  const [{ closeDb, getDb, openDatabase }, { stopStandin }, { runSuite }, { uploadRun, awaitServerConfirmation }, { RUN_EVENTS_FD_ENV, formatRunEvent }] = await Promise.all([
    import("../app/db/client.server"),
    import("../app/services/mail.server"),
    import("./runner/run-suite"),
    import("./runner/upload"),
    import("../app/runs/events"),
  ]);
  const sink = eventsSink(RUN_EVENTS_FD_ENV);
  const { shardPlanForSuite } = await import("./runner/shard-plan");
  const db = args.db ? openDatabase(args.db) : getDb();
  if (args.plan && shard) {
    try {
      const p = shardPlanForSuite(db, args.suite, shard.count, machineClassLabel);
      if (args.json) process.stdout.write(`${JSON.stringify({ ...p.plan, machineClass: p.machineClass, frozenAt: p.plan.frozenAt }, null, 2)}\n`);
      else process.stdout.write(`suite ${p.suiteName} (${p.contentHash.slice(0, 12)}) · machine class ${/^[0-9a-f]{64}$/.test(p.machineClass) ? `${p.machineClass.slice(0, 12)} (fingerprint)` : p.machineClass} · plan ${p.plan.reused ? "frozen" : "made"} ${p.plan.frozenAt.toISOString()}\n${renderPlan(p.plan, shard.index)}\n`);
      return 0;
    } catch (err) {
      process.stderr.write(`bench: ${(err as Error).message}\n`);
      return 1;
    } finally {
      if (args.db) db.$client.close();
      else closeDb();
    }
  }
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
      events: sink,
      alerts: !args["no-alerts"],
      confirm: args.confirm,
      onConfirmTrial: (i) => {
        if (!args.json) process.stderr.write(`\r\x1b[2Kconfirming by interleaved A/B: ${i.done}/${i.total} ${i.key} block ${i.block + 1} ${i.side}`);
        if (!args.json && i.done === i.total) process.stderr.write("\n");
        sink?.write(formatRunEvent({ event: "trial", ...i }));
      },
      baseUrl: args["base-url"],
      jobId,
      shard,
      machineClass: machineClassLabel ?? null,
    });
    let uploaded: { url: string; status: number; body: unknown } | null = null;
    let serverConfirmation: Awaited<ReturnType<typeof awaitServerConfirmation>> = null;
    let exitCode = summary.exitCode;
    if (args.upload && summary.status !== "interrupted") {
      uploaded = await uploadRun(db, summary.runId, args.upload, args.token!, {
        shard: shard ? { ...shard, pipeline: args.pipeline! } : null,
        machineClass: machineClassLabel ?? null,
      });
      // The server's check of the uploaded run (for a shard: of the merged run, by the upload that completed it).
      const remote = uploaded.body as { newRegressions?: unknown; abJobId?: unknown; runId?: unknown } | null;
      let remoteStanding = typeof remote?.newRegressions === "number" ? remote.newRegressions : 0;
      if (args.confirm && remoteStanding > 0 && typeof remote?.abJobId === "number" && typeof remote.runId === "string") {
        // `--confirm` with `--upload`: the server queued an A/B job on its speed regressions; wait for its verdict.
        const verdict = await awaitServerConfirmation(uploaded.url, remote.runId, args.token!, confirmTimeout, args.json ? undefined : (s) => process.stderr.write(`\r\x1b[2K${s}`));
        if (!args.json) process.stderr.write("\n");
        serverConfirmation = verdict;
        if (verdict && verdict.state !== "awaiting") remoteStanding -= verdict.regressionIds.length - verdict.standing.length;
      }
      if (exitCode === 0 && remoteStanding > 0) exitCode = EXIT_REGRESSION;
    }
    if (args.json) {
      const out = {
        runId: summary.runId,
        status: summary.status,
        exitCode,
        shard: summary.shard,
        machineClass: summary.machineClass,
        suite: summary.suite,
        commit: summary.commit,
        machineKey: summary.machineKey,
        calibration: summary.calibration,
        elapsedSeconds: summary.elapsedSeconds,
        counts: tally(summary.outcomes),
        cases: summary.outcomes.map((o) => ({ key: o.spec.key, status: o.status, message: o.message, objective: o.report?.objective ?? null, errors: o.report?.errors ?? null, iterations: o.report?.iterations ?? null, samples: o.samples })),
        baseline: summary.detection ? { runId: summary.detection.baselineRunId, commit: summary.detection.baselineCommit } : null,
        // Screening's group regressions (`--confirm`) join the run's findings: the A/B found them, not the run alone.
        findings: [...(summary.detection?.findings ?? []), ...(summary.alerts?.screened ?? []).map((s) => s.finding)],
        newRegressions: summary.detection?.newRegressions ?? 0,
        // `--confirm`: the A/B verdict on the speed regressions, and the new regressions that stand after it.
        confirmation: summary.alerts?.check && summary.alerts.check.jobId === null ? { state: summary.alerts.check.state, note: summary.alerts.check.note, result: summary.alerts.check.result } : null,
        // Every A/B run at once: one per base commit (the baseline's, and each drift's before its change point).
        confirmations: (summary.alerts?.checks ?? []).filter((c) => c.jobId === null).map((c) => ({ base: c.base, state: c.state, note: c.note })),
        standing: summary.alerts ? summary.alerts.standing : (summary.detection?.newRegressions ?? 0),
        alerts: summary.alerts,
        uploaded,
        serverConfirmation,
      };
      process.stdout.write(`${JSON.stringify(out, null, 2)}\n`);
    } else {
      process.stdout.write(`${summaryText(summary, tally(summary.outcomes))}\n`);
      if (uploaded) process.stdout.write(`uploaded to ${uploaded.url} (HTTP ${uploaded.status})${uploadNote(uploaded.body)}\n`);
      if (serverConfirmation) process.stdout.write(`server's interleaved A/B: ${serverConfirmation.state === "awaiting" ? "no verdict in time: the speed regression(s) stand unconfirmed" : `${serverConfirmation.note ?? serverConfirmation.state}; ${serverConfirmation.standing.length} of ${serverConfirmation.regressionIds.length} speed regression(s) stand`}\n`);
    }
    return exitCode;
  } catch (err) {
    process.stderr.write(`bench: ${(err as Error).message}\n`);
    return 1;
  } finally {
    await stopStandin();
    if (args.db) db.$client.close();
    else closeDb();
  }
}

/** `--ab base..head` (interleaved A/B) and `--bisect good..bad --cases k1,k2` (culprit search). */
async function compareCommits(args: { suite?: string; ab?: string; bisect?: string; cases?: string; blocks?: string; "max-blocks"?: string; groups?: string; json?: boolean; db?: string }): Promise<number> {
  const { parseRange, runAb, abSummary } = await import("./runner/ab");
  const { bisect, bisectSummary } = await import("./runner/bisect");
  const { closeDb, getDb, openDatabase } = await import("../app/db/client.server");
  const range = parseRange((args.ab ?? args.bisect)!);
  if (!range) {
    process.stderr.write(`--${args.ab ? "ab" : "bisect"} takes <commit>..<commit>\n${USAGE}\n`);
    return 2;
  }
  const blocks = args.blocks !== undefined ? Number(args.blocks) : undefined;
  if (blocks !== undefined && (!Number.isInteger(blocks) || blocks < 2)) {
    process.stderr.write(`--blocks must be an integer ≥ 2, got "${args.blocks}"\n`);
    return 2;
  }
  const maxBlocks = args["max-blocks"] !== undefined ? Number(args["max-blocks"]) : undefined;
  if (maxBlocks !== undefined && (!Number.isInteger(maxBlocks) || maxBlocks < (blocks ?? 2))) {
    process.stderr.write(`--max-blocks must be an integer ≥ --blocks, got "${args["max-blocks"]}"\n`);
    return 2;
  }
  const cases = args.cases ? args.cases.split(",").map((c) => c.trim()).filter(Boolean) : undefined;
  let groups: import("../app/runs/ab-result").AbGroup[] | undefined;
  if (args.groups !== undefined) {
    // The job worker passes the verdicts a check waits for: [{ "cases": [...], "clearBelow": 1.1 }, ...].
    const { abGroupSchema } = await import("../app/runs/ab-result");
    const { z } = await import("zod");
    let raw: unknown;
    try {
      raw = JSON.parse(args.groups);
    } catch (e) {
      process.stderr.write(`--groups takes JSON (${(e as Error).message})\n`);
      return 2;
    }
    const g = z.array(abGroupSchema).max(100).safeParse(raw);
    if (!g.success) {
      const i = g.error.issues[0]!;
      process.stderr.write(`--groups: ${i.path.join(".") || "(top)"}: ${i.message}\n`);
      return 2;
    }
    groups = g.data;
  }
  if (args.bisect && !cases?.length) {
    process.stderr.write(`--bisect needs --cases <key,...> (the affected cases)\n`);
    return 2;
  }
  const db = args.db ? openDatabase(args.db) : getDb();
  const controller = new AbortController();
  process.on("SIGINT", () => controller.abort());
  process.on("SIGTERM", () => controller.abort());
  try {
    const { RUN_EVENTS_FD_ENV, formatRunEvent } = await import("../app/runs/events");
    const sink = eventsSink(RUN_EVENTS_FD_ENV);
    // People read the terminal line; the job worker reads the JSON lines on ARCWATCH_EVENTS_FD.
    const progress = (i: { key: string; block: number; side: "A" | "B"; done: number; total: number }) => {
      if (!args.json) process.stderr.write(`\r\x1b[2K${i.done}/${i.total} ${i.key}`);
      sink?.write(formatRunEvent({ event: "trial", ...i }));
    };
    if (args.ab) {
      const r = await runAb({ db, root: process.cwd(), base: range[0], head: range[1], suite: args.suite!, cases, blocks, maxBlocks, groups, signal: controller.signal, onTrial: progress });
      if (!args.json) process.stderr.write("\n");
      process.stdout.write(args.json ? `${JSON.stringify(r, null, 2)}\n` : `${abSummary(r)}\n`);
      const slow = r.pooled ? r.pooled.verdict === "slower" : r.cases.some((c) => c.verdict === "slower");
      return controller.signal.aborted ? 130 : slow ? 3 : 0;
    }
    const r = await bisect({ db, root: process.cwd(), good: range[0], bad: range[1], suite: args.suite!, cases: cases!, blocks, signal: controller.signal, onStep: args.json ? undefined : (s, left) => process.stderr.write(`${s.commit.slice(0, 10)} → ${s.bad ? "bad" : "good"} (about ${left} step(s) left)\n`) });
    process.stdout.write(args.json ? `${JSON.stringify({ ...r, steps: r.steps.map(({ ab, ...s }) => ({ ...s, cases: ab.cases })) }, null, 2)}\n` : `${bisectSummary(r)}\n`);
    return controller.signal.aborted ? 130 : 0;
  } catch (err) {
    process.stderr.write(`bench: ${(err as Error).message}\n`);
    return 1;
  } finally {
    if (args.db) db.$client.close();
    else closeDb();
  }
}


if (isEntryScript(import.meta.url)) {
  main().then(
    (code) => process.exit(code),
    (err) => {
      process.stderr.write(`bench: ${(err as Error).stack ?? err}\n`);
      process.exit(1);
    },
  );
}
