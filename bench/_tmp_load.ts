import { loadLibrary } from "~/engine/problem/load";
import { formatProblemError } from "~/engine/problem/errors";
const lib = loadLibrary("problems");
for (const e of lib.errors) console.log(formatProblemError(e));
for (const p of lib.problems) console.log(p.id, JSON.stringify(p.reference.objective?.value), p.reference.objective?.tolerance, p.reference.trajectory?.t.length, p.warnings.join("; "));
