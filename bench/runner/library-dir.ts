/**
 * The runner's problem library: the measured checkout's problems/ folder plus the problems
 * engineers added in the browser (the uploaded-problems folder, by default `problems/` beside the
 * database file, or ARCWATCH_UPLOADED_PROBLEMS). When the uploaded folder has problems, a merged
 * view is built in a temporary folder of symbolic links (one per problem folder; a checkout
 * problem wins over an uploaded one of the same id), so that suite expansion by id and tag,
 * loading, recording and the reference arcs all see one library. See DEVELOPERS.md, Decisions,
 * "Uploaded problems".
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";

function problemFolders(dir: string): string[] {
  try {
    return fs.readdirSync(dir).filter((n) => !n.startsWith(".") && fs.existsSync(path.join(dir, n, "problem.json")));
  } catch {
    return [];
  }
}

/** The uploaded-problems folder for a database file (null for an in-memory database without the variable). */
export function uploadedProblemsDirFor(dbFile: string | null): string | null {
  if (process.env.ARCWATCH_UPLOADED_PROBLEMS) return path.resolve(process.env.ARCWATCH_UPLOADED_PROBLEMS);
  if (!dbFile || dbFile === ":memory:" || dbFile === "") return null;
  return path.join(path.dirname(path.resolve(dbFile)), "problems");
}

/**
 * `<root>/problems` when nothing was uploaded; otherwise a temporary merged folder, removed
 * when the process exits.
 */
export function runnerLibraryDir(root: string, uploadedDir: string | null): string {
  const own = path.join(root, "problems");
  const extra = uploadedDir ? problemFolders(uploadedDir) : [];
  if (!uploadedDir || extra.length === 0 || path.resolve(uploadedDir) === path.resolve(own)) return own;
  const merged = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-library-"));
  for (const id of extra) fs.symlinkSync(path.join(path.resolve(uploadedDir), id), path.join(merged, id), "dir");
  for (const id of problemFolders(own)) {
    const link = path.join(merged, id);
    if (fs.existsSync(link)) fs.rmSync(link);
    fs.symlinkSync(path.join(own, id), link, "dir");
  }
  process.once("exit", () => fs.rmSync(merged, { recursive: true, force: true }));
  return merged;
}
