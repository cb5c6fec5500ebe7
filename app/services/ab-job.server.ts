/**
 * The job worker's "ab" jobs: the same interleaved A/B as the command line, run as the command
 * line in a child process (app/ imports nothing from bench/):
 *     node --import tsx <server>/bench/run.ts --suite <s> --ab <base>..<head> --cases <k,...> --json --db <db>
 * with the repository (ARCWATCH_REPO, default the server's folder) as working directory; the
 * command checks both commits out into their own worktrees and removes them after. Progress comes
 * from its JSON-lines events on fd 3 ("trial" events, app/runs/events.ts); its verdict from its JSON
 * output (app/runs/ab-result.ts), stored on the job's check (app/models/ab-checks.server.ts) by
 * `afterAbJob`, which also sends any e-mail the check held back. Cancel: the heartbeat reads the
 * job's status back and stops the child as for a bench job.
 */
import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { databasePath, type Db } from "~/db/client.server";
import type { JobRow } from "~/db/schema";
import { finishJob, heartbeatJob, type BenchProgress } from "~/models/jobs.server";
import { abJobPayload, abResultSchema } from "~/runs/ab-result";
import { RUN_EVENTS_FD_ENV } from "~/runs/events";
import { afterAbJob } from "./ab-confirm.server";
import { repoRoot } from "./git.server";
import { onRunEvents, superviseJobChild, whenUnlocked } from "./job-child.server";


/** Runs one claimed "ab" job to its end (never throws: a failure is the job's recorded result). */
export async function runAbJob(db: Db, job: JobRow, onChild: (c: ChildProcess | null) => void = () => undefined): Promise<void> {
  let log = "";
  const append = (s: string) => (log += s);
  const baseUrl = process.env.ARCWATCH_BASE_URL ?? `http://${process.env.HOST ?? "127.0.0.1"}:${process.env.PORT ?? 3000}`;
  try {
    const payload = abJobPayload.parse(job.payloadJson);
    const root = repoRoot();
    const server = process.cwd();
    const progress: BenchProgress = { done: 0, total: 0, current: null, lastCase: null, lastStatus: null, elapsedSeconds: 0, etaSeconds: null, commit: payload.head, runId: null, phase: "checkout" };
    const args = ["--import", pathToFileURL(path.join(server, "node_modules", "tsx", "dist", "loader.mjs")).href, path.join(server, "bench", "run.ts"), "--suite", payload.suite, "--ab", `${payload.base}..${payload.head}`, "--json", "--db", databasePath()];
    if (payload.cases?.length) args.push("--cases", payload.cases.join(","));
    if (payload.blocks) args.push("--blocks", String(payload.blocks));
    if (payload.maxBlocks) args.push("--max-blocks", String(payload.maxBlocks));
    if (payload.groups?.length) args.push("--groups", JSON.stringify(payload.groups));
    append(`$ cd ${root} && node ${args.slice(2).join(" ")}\n`);
    heartbeatJob(db, job.id, progress, log);
    log = "";
    const child = spawn(process.execPath, args, {
      cwd: root,
      env: {
        ...process.env,
        ARCWATCH_DB: databasePath(),
        ARCWATCH_JOB_WORKER: "0",
        FORCE_COLOR: "0",
        TSX_TSCONFIG_PATH: process.env.TSX_TSCONFIG_PATH ?? path.join(server, "tsconfig.json"),
        ARCWATCH_MIGRATIONS: process.env.ARCWATCH_MIGRATIONS ?? path.join(server, "drizzle"),
        [RUN_EVENTS_FD_ENV]: "3",
      },
      stdio: ["ignore", "pipe", "pipe", "pipe"],
    });
    onChild(child);
    let stdout = "";
    child.stdout!.on("data", (d: Buffer) => (stdout += d.toString("utf8")));
    child.stderr!.on("data", (d: Buffer) => append(d.toString("utf8").replace(/\r?\x1b\[2K/g, "")));
    onRunEvents(child, (e) => {
      if (e.event !== "trial") return;
      const rate = progress.elapsedSeconds > 0 && e.done > 0 ? progress.elapsedSeconds / e.done : null;
      Object.assign(progress, { done: e.done, total: e.total, phase: "running", current: `${e.key} · block ${e.block + 1} · ${e.side === "A" ? "A (base)" : "B (head)"}`, etaSeconds: rate !== null ? rate * (e.total - e.done) : null });
    });
    const code = await superviseJobChild(child, (elapsed) => {
      progress.elapsedSeconds = elapsed;
      const status = heartbeatJob(db, job.id, progress, log);
      log = "";
      return status;
    });
    onChild(null);
    Object.assign(progress, { phase: "finishing", current: null, etaSeconds: null });
    append(`\n[exit ${code}]\n`);
    await whenUnlocked(() => heartbeatJob(db, job.id, progress, log));
    log = "";
    // 0: no slowdown; 3: slower (a verdict, not a failure); 130: interrupted.
    if (code === 0 || code === 3) {
      let doc: unknown;
      try {
        doc = JSON.parse(stdout);
      } catch {
        throw new Error("bench --ab printed no JSON verdict");
      }
      const parsed = abResultSchema.safeParse(doc);
      if (!parsed.success) throw new Error(`bench --ab printed an unexpected verdict: ${parsed.error.issues[0]?.path.join(".")}: ${parsed.error.issues[0]?.message}`);
      await afterAbJob(db, job.id, { result: parsed.data }, baseUrl);
      await whenUnlocked(() => finishJob(db, job.id, "done", null));
    } else if (code === 130) {
      await afterAbJob(db, job.id, { error: "the job was cancelled" }, baseUrl);
      await whenUnlocked(() => finishJob(db, job.id, "cancelled", "Interrupted."));
    } else {
      const why = `bench --ab exited with code ${code}`;
      await afterAbJob(db, job.id, { error: why }, baseUrl);
      await whenUnlocked(() => finishJob(db, job.id, "failed", why));
    }
  } catch (err) {
    const message = (err as Error).message;
    append(`\n${message}\n`);
    await whenUnlocked(() => heartbeatJob(db, job.id, null, log));
    await afterAbJob(db, job.id, { error: message.slice(0, 500) }, baseUrl).catch(() => undefined);
    await whenUnlocked(() => finishJob(db, job.id, "failed", message.slice(0, 2000)));
  }
}
