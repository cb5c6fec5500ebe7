/**
 * Part 2 of the web product, below the browser: adding and editing a problem (errors at their
 * fields, versions by content hash), the runner picking uploaded problems up by tag, the
 * comparison views (fitted orders, cheapest setting, profiles), and the role checks of the
 * problem and regression routes (a viewer's forged requests get 403).
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { formPost, useTempDatabase } from "../helpers/temp-db";

useTempDatabase("part2");
const uploads = fs.mkdtempSync(path.join(os.tmpdir(), "arcwatch-part2-uploads-"));
process.env.ARCWATCH_UPLOADED_PROBLEMS = uploads;
afterAll(() => fs.rmSync(uploads, { recursive: true, force: true }));

const { getDb } = await import("~/db/client.server");
const { createUser } = await import("~/models/users.server");
const { signIn } = await import("~/services/auth.server");
const problemsModel = await import("~/models/problems.server");
const { buildViews } = await import("~/models/compare.server");
const { fitConvergenceOrder } = await import("~/engine/analysis/convergence-order");
const { buildProblemJson, builderFieldOf, emptyBuilderValues } = await import("~/engine/problem/form");
const { problemLibraryFor, uploadedProblemsDir } = await import("~/models/library.server");
const { expandCases, suiteSchema } = await import("~/runs/suite");
const { triageRegression, getRegressionDetail, listRegressions } = await import("~/models/regressions.server");
const schema = await import("~/db/schema");

const BASE = "http://127.0.0.1:3000";
const cookies: Record<string, string> = {};
const ids: Record<string, number> = {};
const ROOT = path.resolve(import.meta.dirname, "..", "..");

/** A double integrator of our own (the Plover cart): minimise ∫u²/2 from (0,0) to (1,0) in 1 s. */
const PLOVER = {
  format: "arcwatch-problem/1",
  title: "Plover cart, rest-to-rest in one second",
  description: "Minimum-energy double integrator.",
  tags: ["smooth", "plover-test-tag"],
  constants: {},
  states: [{ name: "x" }, { name: "v" }],
  controls: [{ name: "u" }],
  dynamics: { x: "v", v: "u" },
  horizon: { initialTime: 0, finalTime: { fixed: 1 } },
  initial: { x: 0, v: 0 },
  final: { x: 1, v: 0 },
  objective: { sense: "min", running: "u^2/2" },
  guess: { kind: "linear" },
  // u(t) = 6 − 12t, J = ∫₀¹ (6 − 12t)²/2 dt = 6 (Bryson & Ho, Applied Optimal Control, 1975, §5.2:
  // minimum-energy transfer of a double integrator; recomputed by hand here).
  reference: { objective: { value: 6, tolerance: 1e-9, provenance: { kind: "analytic", detail: "u = 6 − 12t" } } },
};

async function cookieFor(email: string, password: string) {
  const r = await signIn(formPost(`${BASE}/signin`, { email, password }));
  if (!r.ok) throw new Error("sign-in failed");
  return r.headers.get("Set-Cookie")!.split(";")[0]!;
}

function multipart(url: string, fields: Record<string, string>, cookie: string, files: Record<string, File> = {}): Request {
  const fd = new FormData();
  for (const [k, v] of Object.entries(fields)) fd.set(k, v);
  for (const [k, f] of Object.entries(files)) fd.set(k, f);
  return new Request(url, { method: "POST", body: fd, headers: { Origin: BASE, Cookie: cookie } });
}

async function statusOf(p: Promise<unknown>): Promise<number> {
  try {
    const r = await p;
    return r instanceof Response ? r.status : ((r as { init?: { status?: number } })?.init?.status ?? 200);
  } catch (e) {
    if (e instanceof Response) return e.status;
    const d = e as { init?: { status?: number } };
    if (d?.init?.status) return d.init.status;
    throw e;
  }
}

beforeAll(async () => {
  const db = getDb();
  for (const role of ["viewer", "engineer"] as const) {
    const u = await createUser(db, { email: `${role}@part2.test`, name: `${role} person`, role, password: `${role}-password` });
    ids[role] = u.id;
    cookies[role] = await cookieFor(`${role}@part2.test`, `${role}-password`);
  }
});

describe("adding a problem", () => {
  it("puts an upload's error at the problem field with path, column and suggestion, and keeps the text", async () => {
    const bad = JSON.stringify({ ...PLOVER, dynamics: { x: "v", v: "uu" } });
    const fd = new FormData();
    fd.set("mode", "upload");
    fd.set("id", "plover-cart");
    fd.set("problemFile", new File([bad], "problem.json", { type: "application/json" }));
    const sub = await problemsModel.readProblemSubmission(fd);
    expect(sub.files).toBeNull();
    expect(sub.errors.problemJson).toMatch(/dynamics\.v, column 1: unknown name 'uu' — did you mean 'u'\?/);
    expect(sub.values.problemJson).toBe(bad);
  });

  it("refuses a file of the wrong type or size at its field", async () => {
    const fd = new FormData();
    fd.set("mode", "upload");
    fd.set("id", "plover-cart");
    fd.set("problemFile", new File(["x"], "problem.png", { type: "image/png" }));
    fd.set("referenceFile", new File(["t,x\n".padEnd(problemsModel.MAX_REFERENCE_UPLOAD_BYTES + 10, "0")], "reference.csv", { type: "text/csv" }));
    const sub = await problemsModel.readProblemSubmission(fd);
    expect(sub.errors.problemJson).toMatch(/Choose a \.json file/);
    expect(sub.errors.referenceCsv).toMatch(/the limit is 4096 KiB/);
  });

  it("maps builder errors to builder fields", () => {
    const v = emptyBuilderValues();
    Object.assign(v, { title: "Plover", states: "x, m, , , 0, 1\nv, m/s, , , 0, 0", controls: "u", dynamics: "x' = v\nv' = uu", tf: "1", running: "u^2/2" });
    const built = buildProblemJson(v);
    expect(built.ok).toBe(true);
    expect(builderFieldOf({ file: "f", path: "dynamics.v", message: "m" })).toBe("dynamics");
    expect(builderFieldOf({ file: "f", path: "final.x", message: "m" })).toBe("states");
    expect(builderFieldOf({ file: "f", path: "horizon.finalTime.free.upper", message: "m" })).toBe("tfUpper");
    expect(builderFieldOf({ file: "f", path: "objective.running", message: "m" })).toBe("running");
    const broken = buildProblemJson({ ...v, states: "2x, m" });
    expect(broken.ok).toBe(false);
    if (!broken.ok) expect(broken.errors.states).toMatch(/line 1/);
  });

  it("a builder submission compiles, and a compiler error lands at the builder field", async () => {
    const fd = new FormData();
    const fields: Record<string, string> = { mode: "form", id: "plover-built", title: "Plover built", tags: "smooth", constants: "k = 2 ; 1/s", states: "x, m, , , 0, 1\nv, m/s, , , 0, 0", controls: "u, m/s^2, -k*10, k*10", dynamics: "x' = v\nv' = uu", t0: "0", tfKind: "fixed", tf: "1", sense: "min", running: "u^2/2", refObjective: "6", refTolerance: "1e-9", refKind: "analytic", refDetail: "u = 6 - 12t" };
    for (const [k, v] of Object.entries(fields)) fd.set(k, v);
    const bad = await problemsModel.readProblemSubmission(fd);
    expect(bad.files).toBeNull();
    // The column counts from the start of the typed line "v' = uu" (issue 15): 'uu' is its 6th character.
    expect(bad.errors.dynamics).toMatch(/line 2, column 6: unknown name 'uu' — did you mean 'u'\?/);
    expect(bad.values.dynamics).toBe(fields.dynamics);
    fd.set("dynamics", "x' = v\nv' = u");
    const good = await problemsModel.readProblemSubmission(fd);
    expect(good.errors).toEqual({});
    const json = JSON.parse(good.files!.problemJson);
    expect(json.controls).toEqual([{ name: "u", unit: "m/s^2", lower: "-k*10", upper: "k*10" }]);
    expect(json.final).toEqual({ x: 1, v: 0 });
  });

  it("trial-solves, saves a version, and an edit makes a new version without touching old results", async () => {
    const files = { problemJson: JSON.stringify(PLOVER, null, 2) };
    const trial = await problemsModel.trialSolve(files, "plover-cart", "hermite-simpson", 10);
    if ("error" in trial) throw new Error(trial.error);
    expect(trial.status).toBe("optimal");
    // Hermite–Simpson integrates the cubic x(t) and linear u(t) of this problem exactly up to the
    // quadrature of u²: J = 6 to 1e-6 relative (tolerance: the NLP's own tolerance, common practice, no source).
    expect(Math.abs(trial.objective! - 6) / 6).toBeLessThan(1e-6);
    expect(trial.states!.columns.x!.length).toBeGreaterThan(10);

    const db = getDb();
    const first = problemsModel.saveUploadedProblem(db, "plover-cart", files, "create");
    expect(first.ok).toBe(true);
    if (!first.ok) return;
    expect(fs.existsSync(path.join(uploads, "plover-cart", "problem.json"))).toBe(true);
    const again = problemsModel.saveUploadedProblem(db, "plover-cart", files, "create");
    expect(again.ok).toBe(false);

    // a result recorded against the first version
    const suite = db.insert(schema.suites).values({ name: "part2", contentHash: "h", definitionJson: {} }).returning().get();
    db.insert(schema.runs).values({ id: "run-old", suiteId: suite.id, commitHash: "a".repeat(40), branch: "main", machineJson: {}, machineKey: "m", startedAt: new Date(1000), status: "complete" }).run();
    db.insert(schema.caseResults).values({ runId: "run-old", problemId: "plover-cart", problemVersionHash: first.versionHash, caseKey: "plover-cart/hermite-simpson/10", scheme: "hermite-simpson", intervals: 10, status: "optimal", objectiveErrorRel: 1e-7, medianSeconds: 0.01 }).run();

    const edited = { problemJson: JSON.stringify({ ...PLOVER, title: "Plover cart (edited)" }, null, 2) };
    const second = problemsModel.saveUploadedProblem(db, "plover-cart", edited, "edit");
    expect(second.ok && second.newVersion).toBe(true);
    if (!second.ok) return;
    expect(second.versionHash).not.toBe(first.versionHash);
    const detail = await problemsModel.getProblemDetail(db, "plover-cart");
    expect(detail.ok).toBe(true);
    if (!detail.ok) return;
    expect(detail.detail.title).toBe("Plover cart (edited)");
    expect(detail.detail.versions.map((v) => v.contentHash).sort()).toEqual([first.versionHash, second.versionHash].sort());
    expect(detail.detail.versions.find((v) => v.contentHash === first.versionHash)!.results).toBe(1);
    expect(detail.detail.versions.find((v) => v.contentHash === second.versionHash)!.results).toBe(0);
    expect(detail.detail.tex["dynamics.v"]).toBe("u");
    const refs = db.select().from(schema.problemReferences).all();
    expect(refs.map((r) => r.objective)).toEqual([6, 6]); // one per version
    expect(refs[0]!.provenanceJson).toEqual({ objective: { kind: "analytic", detail: "u = 6 − 12t" } });
    expect(detail.detail.best[0]).toMatchObject({ scheme: "hermite-simpson", intervals: 10 });

    const lib = await problemsModel.listProblemLibrary(db);
    const entry = lib.find((e) => e.id === "plover-cart");
    expect(entry).toMatchObject({ origin: "uploaded", tags: ["smooth", "plover-test-tag"] });
    expect(entry!.schemes["hermite-simpson"]).toMatchObject({ cases: 1, solved: 1, bestErrorRel: 1e-7 });
    expect(lib.some((e) => e.id === "pika-rover-dash" && e.origin === "library")).toBe(true);
    expect(problemsModel.saveUploadedProblem(db, "pika-rover-dash", files, "create")).toMatchObject({ ok: false, idError: expect.stringMatching(/checkout's library/) });
  }, 180_000); // the detail and the list start a solver thread (seconds on a loaded machine)

  it("the runner's library includes the uploaded problem, selected by its tag", () => {
    // One place computes the uploaded folder, for the pages and the runner alike.
    expect(uploadedProblemsDir(":memory:")).toBe(uploads);
    const library = problemLibraryFor(getDb(), ROOT);
    expect(library.roots).toEqual([path.join(ROOT, "problems"), uploads]);
    const suite = suiteSchema.parse({ format: "arcwatch-suite/1", name: "tagged", problems: [{ tag: "plover-test-tag" }, "pika-rover-dash"], schemes: ["trapezoidal"], meshes: [{ intervals: 10 }] });
    expect(expandCases(suite, library).map((c) => c.key)).toEqual(["plover-cart/trapezoidal/10", "pika-rover-dash/trapezoidal/10"]);
    // A checkout problem wins over an uploaded one of the same id.
    expect(library.rootIndexOf("pika-rover-dash")).toBe(0);
    expect(library.rootIndexOf("plover-cart")).toBe(1);
  });
});

describe("comparison", () => {
  it("fits the order of errors that follow C·N^(−p) exactly", () => {
    // e = 3 N^(−2): log e = log 3 − 2 log N exactly, so p̂ = 2 and Ĉ = 3 (to rounding, 1e-12).
    const n = [10, 20, 40, 80];
    const fit = fitConvergenceOrder(n, n.map((k) => 3 * k ** -2));
    expect(fit!.order).toBeCloseTo(2, 12);
    expect(fit!.constant).toBeCloseTo(3, 10);
    expect(fitConvergenceOrder([10, 10], [1, 2])).toBeNull();
  });

  it("builds orders, cheapest settings and profiles with failures", () => {
    const pt = (problemId: string, scheme: string, intervals: number, error: number | null, seconds: number, solved = true) => ({ caseId: intervals, problemId, scheme, intervals, degree: null, solved, error, seconds });
    const points = [
      pt("p1", "trapezoidal", 10, 1e-2, 0.01),
      pt("p1", "trapezoidal", 20, 2.5e-3, 0.02),
      pt("p1", "trapezoidal", 40, 6.25e-4, 0.04),
      pt("p1", "hermite-simpson", 10, 1e-4, 0.03),
      pt("p1", "hermite-simpson", 20, 6.25e-6, 0.06),
    ];
    const v = buildViews(points, 1e-3);
    const trap = v.convergence.find((c) => c.scheme === "trapezoidal")!;
    expect(trap.fittedOrder).toBeCloseTo(2, 10); // errors quarter per doubling: order 2
    expect(trap.theoreticalOrder).toBe(2);
    expect(v.convergence.find((c) => c.scheme === "hermite-simpson")!.fittedOrder).toBeCloseTo(4, 10);
    // cheapest meeting 1e-3: trapezoidal 40 (0.04 s, 6.25e-4) vs Hermite–Simpson 10 (0.03 s, 1e-4)
    expect(v.cheapest).toEqual([{ problemId: "p1", scheme: "hermite-simpson", intervals: 10, degree: null, error: 1e-4, seconds: 0.03, caseId: 10 }]);

    // Two problems; on p2 trapezoidal never meets the tolerance and Hermite–Simpson fails:
    // time costs p1: (0.04, 0.03) → r = (4/3, 1); p2: (fail, fail) → both r_M.
    const two = buildViews([...points, pt("p2", "trapezoidal", 10, 0.5, 0.01), pt("p2", "hermite-simpson", 10, null, 0.01, false)], 1e-3);
    expect(two.timeProfile.schemes).toEqual(["trapezoidal", "hermite-simpson"]);
    expect(two.timeProfile.profile!.ratio[0]![0]).toBeCloseTo(4 / 3, 12);
    expect(two.timeProfile.profile!.ratio[1]).toEqual([Infinity, Infinity]);
    expect(two.timeProfile.profile!.wins).toEqual([0, 0.5]);
    expect(two.timeProfile.profile!.robustness).toEqual([0.5, 0.5]);
    // accuracy costs p1: (6.25e-4, 6.25e-6) → r = (100, 1); p2: (0.5, fail) → r = (1, ∞)
    expect(two.accuracyProfile.profile!.ratio[0]![0]).toBeCloseTo(100, 10);
    expect(two.accuracyProfile.profile!.ratio[1]).toEqual([1, Infinity]);
    expect(two.accuracyProfile.profile!.robustness).toEqual([1, 0.5]);
    expect(two.cheapest.find((c) => c.problemId === "p2")!.scheme).toBeNull();
    expect(two.ordersByProblem[0]!.orders.trapezoidal).toBeCloseTo(2, 10);
    expect(two.ordersByProblem[1]!.orders).toEqual({ trapezoidal: null, "hermite-simpson": null });
  });
});

describe("roles on part 2 routes", () => {
  it("a viewer cannot upload, edit or trial-solve (403), an engineer can", async () => {
    const api = await import("~/routes/api/problems");
    const apiOne = await import("~/routes/api/problems.$id");
    const trial = await import("~/routes/api/problems.trial");
    const page = await import("~/routes/problems.new");
    const fields = { mode: "upload", id: "viewer-made", problemJson: JSON.stringify(PLOVER) };
    const args = (request: Request, params: Record<string, string> = {}) => ({ request, params, context: {} }) as never;
    expect(await statusOf(api.action(args(multipart(`${BASE}/api/problems`, fields, cookies.viewer!))))).toBe(403);
    expect(await statusOf(apiOne.action(args(multipart(`${BASE}/api/problems/plover-cart`, fields, cookies.viewer!), { id: "plover-cart" })))).toBe(403);
    expect(await statusOf(trial.action(args(multipart(`${BASE}/api/problems/trial`, fields, cookies.viewer!))))).toBe(403);
    expect(await statusOf(page.action(args(multipart(`${BASE}/problems/new`, fields, cookies.viewer!))))).toBe(403);
    expect(fs.existsSync(path.join(uploads, "viewer-made"))).toBe(false);
    expect(await statusOf(api.action(args(multipart(`${BASE}/api/problems`, fields, cookies.engineer!))))).toBe(201);
  });

  it("a viewer cannot triage (403) but may comment; an engineer's triage is in the history", async () => {
    const db = getDb();
    db.insert(schema.runs).values({ id: "run-new", suiteId: 1, commitHash: "b".repeat(40), branch: "main", machineJson: {}, machineKey: "m", startedAt: new Date(2000), status: "complete" }).run();
    const reg = db.insert(schema.regressions).values({ runId: "run-new", baselineRunId: "run-old", caseKey: "plover-cart/hermite-simpson/10", kind: "speed", direction: "regression", metric: "median_seconds", before: 0.01, after: 0.02, ratio: 2, pValue: 1e-4 }).returning().get();
    const api = await import("~/routes/api/regressions.$id");
    const args = (request: Request) => ({ request, params: { id: String(reg.id) }, context: {} }) as never;
    for (const intent of ["acknowledge", "expected", "fixed", "assign", "reopen"]) {
      expect(await statusOf(api.action(args(formPost(`${BASE}/api/regressions/${reg.id}`, { intent, reason: "r", fixingCommit: "abcdef1", assigneeId: String(ids.engineer) }, { Cookie: cookies.viewer! }))))).toBe(403);
    }
    expect(await statusOf(api.action(args(formPost(`${BASE}/api/regressions/${reg.id}`, { intent: "comment", body: "Seen it too." }, { Cookie: cookies.viewer! }))))).toBe(200);
    expect(await statusOf(api.action(args(formPost(`${BASE}/api/regressions/${reg.id}`, { intent: "expected", reason: " " }, { Cookie: cookies.engineer! }))))).toBe(400);
    expect(await statusOf(api.action(args(formPost(`${BASE}/api/regressions/${reg.id}`, { intent: "expected", reason: "New line search trades time for robustness." }, { Cookie: cookies.engineer! }))))).toBe(200);
    expect(triageRegression(db, reg.id, ids.engineer!, { intent: "assign", assigneeId: ids.viewer! })).toMatchObject({ ok: false, errors: { assigneeId: expect.any(String) } });
    const d = (await getRegressionDetail(db, reg.id, ids.viewer!))!;
    expect(d.regression.status).toBe("expected");
    expect(d.events.at(-1)).toMatchObject({ user: "engineer person", fromStatus: "open", toStatus: "expected", note: "Marked expected: New line search trades time for robustness." });
    expect(d.comments).toMatchObject([{ user: "viewer person", body: "Seen it too." }]);
    expect(d.before?.runId).toBe("run-old");
    expect(listRegressions(db, { status: "expected", limit: 10 }).map((r) => r.id)).toEqual([reg.id]);
    expect(await statusOf(api.action(args(formPost(`${BASE}/api/regressions/${reg.id}`, { intent: "subscribe" }, { Cookie: cookies.viewer! }))))).toBe(200);
    expect((await getRegressionDetail(db, reg.id, ids.viewer!))!.subscribed).toBe(true);
  });
});
