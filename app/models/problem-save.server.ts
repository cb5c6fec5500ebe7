/**
 * Saving a problem added or edited in the browser (or through POST/PUT /api/problems).
 *
 * The compile that checks a submission runs on a solver thread (app/services/solver-pool.server.ts);
 * the thread hands back, beside the files, a `SavePlan`: the plain data the save stores (title,
 * tags, version hash, trusted answers). The request thread then only writes files and rows, so a
 * large problem never compiles on the thread that answers every other request.
 */
import fs from "node:fs";
import path from "node:path";
import { and, eq } from "drizzle-orm";
import type { Db } from "~/db/client.server";
import { problemReferences, problemVersions, problems } from "~/db/schema";
import { compileProblemSource, problemVersionHash, type ProblemSourceFiles } from "~/engine/problem/compile";
import type { ProblemError } from "~/engine/problem/errors";
import { PROBLEM_ID_PATTERN } from "~/engine/problem/load";
import type { CompiledProblem, ProblemReference } from "~/engine/problem/types";
import { libraryProblemsDir, uploadedProblemsDir } from "./library.server";

/** What a save stores from a compiled problem: plain data, so it crosses from a solver thread. */
export interface SavePlan {
  title: string;
  description: string;
  tags: string[];
  versionHash: string;
  reference: ProblemReference;
}

export function savePlanOf(p: CompiledProblem): SavePlan {
  return { title: p.title, description: p.description, tags: [...p.tags], versionHash: p.versionHash, reference: p.reference };
}

export function isLibraryProblem(id: string): boolean {
  return PROBLEM_ID_PATTERN.test(id) && fs.existsSync(path.join(libraryProblemsDir(), id, "problem.json"));
}

export type SaveOutcome =
  | { ok: true; id: string; versionHash: string; newVersion: boolean }
  | { ok: false; errors: ProblemError[]; idError?: string };

function writeAtomic(file: string, text: string) {
  const tmp = `${file}.${process.pid}.${Date.now()}.tmp`;
  fs.writeFileSync(tmp, text);
  fs.renameSync(tmp, file);
}

/**
 * Saves an added or edited problem: writes its files to the uploaded-problems folder (the
 * runner's library from the next run on), upserts the problem row and adds a problem version
 * keyed by content hash. Results already recorded keep pointing at the version hash they solved,
 * so an edit never rewrites them.
 *
 * `plan` comes from the compile a solver thread did for these very files (its version hash is
 * checked against the files here, a hash and no compile); without it the problem is compiled
 * here (scripts and tests; never a web request).
 */
export function saveUploadedProblem(db: Db, id: string, files: ProblemSourceFiles, mode: "create" | "edit", plan?: SavePlan): SaveOutcome {
  if (!PROBLEM_ID_PATTERN.test(id) || id.includes("..")) return { ok: false, errors: [], idError: "Letters, digits, '-', '_' and '.', starting with a letter or digit (at most 128)." };
  if (isLibraryProblem(id)) return { ok: false, errors: [], idError: `'${id}' is a problem of the checkout's library (edit it in git).` };
  const dir = path.join(uploadedProblemsDir(), id);
  const exists = fs.existsSync(path.join(dir, "problem.json"));
  if (mode === "create" && exists) return { ok: false, errors: [], idError: `A problem '${id}' already exists: open it and choose Edit.` };
  if (mode === "edit" && !exists) return { ok: false, errors: [], idError: `No added problem '${id}' to edit.` };
  let p: SavePlan;
  if (plan && plan.versionHash === problemVersionHash(files)) p = plan;
  else {
    const compiled = compileProblemSource(id, files, `${id}/problem.json`);
    if (!compiled.ok) return { ok: false, errors: compiled.errors };
    p = savePlanOf(compiled.problem);
  }
  fs.mkdirSync(dir, { recursive: true });
  writeAtomic(path.join(dir, "problem.json"), files.problemJson);
  const refFile = path.join(dir, "reference.csv");
  if (files.referenceCsv !== undefined) writeAtomic(refFile, files.referenceCsv);
  else if (fs.existsSync(refFile)) fs.rmSync(refFile);
  let newVersion = false;
  db.transaction((tx) => {
    tx.insert(problems)
      .values({ id, title: p.title, description: p.description, tagsJson: p.tags })
      .onConflictDoUpdate({ target: problems.id, set: { title: p.title, description: p.description, tagsJson: p.tags, updatedAt: new Date() } })
      .run();
    const r = tx.insert(problemVersions).values({ problemId: id, contentHash: p.versionHash, json: files.problemJson }).onConflictDoNothing().run();
    newVersion = r.changes > 0;
    // The version's trusted answers, so that they outlive a later edit of the files.
    const version = tx.select({ id: problemVersions.id }).from(problemVersions).where(and(eq(problemVersions.problemId, id), eq(problemVersions.contentHash, p.versionHash))).get()!;
    const ref = p.reference;
    tx.insert(problemReferences)
      .values({
        problemVersionId: version.id,
        source: "file",
        objective: ref.objective?.value ?? null,
        objectiveTolerance: ref.objective?.tolerance ?? null,
        finalTime: ref.finalTime?.value ?? null,
        finalTimeTolerance: ref.finalTime?.tolerance ?? null,
        switchingTimesJson: ref.switchingTimes?.values ?? null,
        arcsJson: ref.arcs ?? null,
        trajectoryJson: ref.trajectory ? { t: Array.from(ref.trajectory.t), columns: Object.fromEntries(Object.entries(ref.trajectory.columns).map(([k, v]) => [k, Array.from(v)])) } : null,
        provenanceJson: {
          ...(ref.objective ? { objective: ref.objective.provenance } : {}),
          ...(ref.finalTime ? { finalTime: ref.finalTime.provenance } : {}),
          ...(ref.switchingTimes ? { switchingTimes: ref.switchingTimes.provenance } : {}),
          ...(ref.trajectory ? { trajectory: ref.trajectory.provenance } : {}),
        },
      })
      .onConflictDoNothing()
      .run();
  });
  return { ok: true, id, versionHash: p.versionHash, newVersion };
}
