/**
 * The check every queued bench job passes before it is stored, wherever it is queued from
 * (POST /api/jobs, the overview's form): its commit (or ref, or the repository's HEAD) must be
 * in the repository and must hold the suite. A job that cannot run is refused at once with the
 * field that is wrong, instead of failing later in the worker. The stored payload names the
 * resolved commit, so the job measures what was checked even if the branch moves meanwhile.
 */
import type { BenchJobPayload } from "~/models/jobs.server";
import { listSuitesAt, repoRoot, resolveRef } from "./git.server";

export type BenchJobCheck = { ok: true; payload: BenchJobPayload } | { ok: false; field: "suite" | "commit" | "ref"; message: string };

export async function checkBenchJob(payload: BenchJobPayload, root = repoRoot()): Promise<BenchJobCheck> {
  const asked = payload.commit ?? payload.ref ?? "HEAD";
  const field = payload.commit ? "commit" : payload.ref ? "ref" : "commit";
  const commit = await resolveRef(asked, root);
  if (!commit) return { ok: false, field, message: `${asked} is not a commit in the repository (${root}).` };
  const suites = await listSuitesAt(commit, root);
  if (!suites.includes(payload.suite)) {
    return { ok: false, field: "suite", message: `Commit ${commit.slice(0, 10)} has no suite "${payload.suite}" (it has: ${suites.join(", ") || "none"}).` };
  }
  return { ok: true, payload: { ...payload, commit } };
}
