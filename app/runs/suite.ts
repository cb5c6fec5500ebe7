/**
 * Suite files: `<checkout>/bench/suites/<name>.json` (format "arcwatch-suite/1", see DEVELOPERS.md,
 * "Benchmark runner"). Pure apart from reading the suite file itself. A suite names problems (by id or by tag), schemes, meshes, how many timed
 * repeats each case gets, a time budget per case and the regression thresholds. Its content hash
 * (SHA-256 of the canonical JSON) is stored with every run.
 */
import { createHash } from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import { z } from "zod";
import { SCHEMES } from "../engine/schemes/ids";
import type { CaseSpec, Thresholds } from "./types";

export const SUITE_FORMAT = "arcwatch-suite/1";
export const SCHEME_IDS = SCHEMES;

export const DEFAULT_THRESHOLDS: Thresholds = {
  accuracyFactor: 2,
  accuracyFloor: 1e-9,
  iterationShare: 0.25,
  iterationMin: 3,
  speedRatio: 1.1,
  alpha: 0.01,
  confidence: 0.99,
  bootstrapReplicates: 2000,
  driftMinShift: Math.log(1.1),
  driftMinHistory: 6,
  pooledSpeedRatio: 1.05,
  pooledMinCases: 3,
  screenSpeedRatio: 1.05,
  confirmMaxBlocks: 18,
  abConfirm: true,
};

const meshSchema = z
  .object({
    intervals: z.number().int().positive(),
    degree: z.number().int().min(1).max(12).optional(),
    variant: z.string().min(1).optional(),
    /** Only for these schemes (default: all of the suite's schemes). */
    schemes: z.array(z.enum(SCHEME_IDS)).min(1).optional(),
    /**
     * Adaptive refinement (app/engine/mesh/adaptive.ts) from this mesh to each tolerance ε on the
     * largest per-interval error estimate: one case per tolerance, key suffix `@<ε>`, instead of the
     * uniform case.
     */
    tolerances: z.array(z.number().finite().positive()).min(1).max(20).optional(),
  })
  .strict();

const solverSchema = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("builtin") }).strict(),
  z
    .object({
      kind: z.literal("external"),
      /** Shown in run lists, e.g. "acme-nlp (C++)". */
      label: z.string().min(1),
      /** argv; run with the repository as working directory. */
      command: z.array(z.string().min(1)).min(1),
      /** Git repository of the external solver (relative to the suite file's folder or absolute). */
      repository: z.string().min(1),
    })
    .strict(),
  z
    .object({
      kind: z.literal("module"),
      /** A TypeScript/JavaScript module exporting `createExecutor()` (the runner's executor interface), relative to the suite file. */
      module: z.string().min(1),
      label: z.string().min(1).optional(),
      /** Passed to the module's createExecutor as context.options. */
      options: z.record(z.string(), z.unknown()).default({}),
    })
    .strict(),
]);

export const suiteSchema = z
  .object({
    format: z.literal(SUITE_FORMAT),
    name: z.string().regex(/^[a-z0-9][a-z0-9-]*$/, "lower-case letters, digits and dashes"),
    description: z.string().default(""),
    /**
     * Problem ids, { "tag": "..." } for every problem carrying the tag, or { "all": true } for
     * every problem of the library (both resolved when the run starts, so a problem added later
     * is included from the next run on).
     */
    problems: z.array(z.union([z.string().min(1), z.object({ tag: z.string().min(1) }).strict(), z.object({ all: z.literal(true) }).strict()])).min(1),
    schemes: z.array(z.enum(SCHEME_IDS)).min(1),
    meshes: z.array(meshSchema).min(1),
    /** Cases to leave out: { problem?, scheme?, intervals? } all given fields must match. */
    exclude: z
      .array(z.object({ problem: z.string().optional(), scheme: z.enum(SCHEME_IDS).optional(), intervals: z.number().int().optional() }).strict())
      .default([]),
    /** Timed repeats per case (tinybench samples). */
    repeats: z.number().int().min(1).max(1000).default(5),
    /** Untimed warm-up solves per case before the repeats. */
    warmup: z.number().int().min(0).max(100).default(1),
    /** Wall-clock budget per case in seconds (loading, warm-up and repeats); an overrun is a "timeout". */
    timeBudgetSeconds: z.number().positive().default(60),
    /** Cases run at the same time (worker threads). */
    jobs: z.number().int().min(1).max(64).default(1),
    /**
     * "wall": performance.now(). "cpu": CPU seconds of the process (process.cpuUsage), which a busy
     * shared machine perturbs far less; needs jobs = 1 since the process's other workers would count.
     */
    clock: z.enum(["wall", "cpu"]).default("wall"),
    solver: solverSchema.default({ kind: "builtin" }),
    thresholds: z
      .object({
        accuracyFactor: z.number().gt(1),
        accuracyFloor: z.number().min(0),
        iterationShare: z.number().min(0),
        iterationMin: z.number().int().min(0),
        speedRatio: z.number().gt(1),
        alpha: z.number().gt(0).lt(1),
        confidence: z.number().gt(0).lt(1),
        bootstrapReplicates: z.number().int().min(100),
        driftMinShift: z.number().min(0),
        driftMinHistory: z.number().int().min(4),
        pooledSpeedRatio: z.number().gt(1),
        pooledMinCases: z.number().int().min(2),
        screenSpeedRatio: z.number().min(0).max(10),
        confirmMaxBlocks: z.number().int().min(6).max(60),
        abConfirm: z.boolean(),
      })
      .partial()
      .strict()
      .default({}),
  })
  .strict()
  .refine((s) => s.clock === "wall" || s.jobs === 1, { path: ["jobs"], message: 'clock "cpu" needs jobs = 1 (process CPU time would include the other workers)' });

export type SuiteFile = z.infer<typeof suiteSchema>;

export interface LoadedSuite {
  file: string;
  definition: SuiteFile;
  thresholds: Thresholds;
  /** Hex SHA-256 of the canonical JSON of the definition (keys sorted). */
  contentHash: string;
}

/** JSON with object keys sorted, for hashing. */
export function canonicalJson(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(",")}]`;
  if (value && typeof value === "object") {
    const entries = Object.entries(value as Record<string, unknown>)
      .filter(([, v]) => v !== undefined)
      .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
    return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(",")}}`;
  }
  return JSON.stringify(value);
}

export const sha256 = (text: string) => createHash("sha256").update(text).digest("hex");

/** Resolves `--suite <name|path>`: a path to a .json file, or a name under `<root>/bench/suites/`. */
export function suitePath(nameOrPath: string, root = process.cwd()): string {
  if (nameOrPath.endsWith(".json") || nameOrPath.includes("/")) return path.resolve(root, nameOrPath);
  return path.join(root, "bench", "suites", `${nameOrPath}.json`);
}

/** Reads and validates a suite file; errors name the file and the field. */
export function loadSuite(file: string): LoadedSuite {
  let text: string;
  try {
    text = fs.readFileSync(file, "utf8");
  } catch {
    throw new Error(`Suite file not found: ${file}`);
  }
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (err) {
    throw new Error(`${file}: not valid JSON (${(err as Error).message})`);
  }
  const parsed = suiteSchema.safeParse(raw);
  if (!parsed.success) {
    const issues = parsed.error.issues.map((i) => `  ${i.path.join(".") || "(root)"}: ${i.message}`).join("\n");
    throw new Error(`${file}: invalid suite\n${issues}`);
  }
  const definition = parsed.data;
  return {
    file,
    definition,
    thresholds: { ...DEFAULT_THRESHOLDS, ...definition.thresholds },
    contentHash: sha256(canonicalJson(definition)),
  };
}

/** `<problemId>/<scheme>/<intervals>[x<degree>][:<variant>][@<tolerance>]` (tolerance: adaptive mesh, e.g. `@1e-6`). */
export const caseKey = (problemId: string, scheme: string, intervals: number, degree?: number, variant?: string, tolerance?: number) =>
  `${problemId}/${scheme}/${intervals}${degree !== undefined ? `x${degree}` : ""}${variant ? `:${variant}` : ""}${tolerance !== undefined ? `@${tolerance.toExponential()}` : ""}`;

/**
 * What suite expansion needs from the problem library (app/engine/problem/library.ts): every
 * problem id with its tags, and a label for error messages.
 */
export interface ProblemCatalog {
  /** Where the problems come from, e.g. the library's roots. */
  readonly label: string;
  /** Problem id → tags, for every problem of the library (ids sorted). */
  tagsById(): Map<string, string[]>;
}

/**
 * The cases of a suite: problems (ids in order given, tags expanded alphabetically, duplicates
 * dropped) × schemes × meshes (restricted by mesh.schemes), minus exclusions. The degree is kept
 * only for LGR (the one scheme with a collocation degree), defaulting to 4. A mesh with
 * `tolerances` gives one adaptive case per tolerance (the mesh is the first pass's).
 */
export function expandCases(suite: SuiteFile, library: ProblemCatalog): CaseSpec[] {
  const tags = library.tagsById();
  const ids: string[] = [];
  suite.problems.forEach((p, i) => {
    if (typeof p === "string") {
      if (!tags.has(p)) throw new Error(`suite "${suite.name}": problems[${i}] "${p}" is not a problem of the library (${library.label})`);
      if (!ids.includes(p)) ids.push(p);
    } else if ("all" in p) {
      if (tags.size === 0) throw new Error(`suite "${suite.name}": problems[${i}] selects every problem, but the library (${library.label}) has none`);
      for (const id of tags.keys()) if (!ids.includes(id)) ids.push(id);
    } else {
      const hits = [...tags.entries()].filter(([, t]) => t.includes(p.tag)).map(([id]) => id);
      if (hits.length === 0) throw new Error(`suite "${suite.name}": problems[${i}] tag "${p.tag}" matches no problem of the library (${library.label})`);
      for (const id of hits) if (!ids.includes(id)) ids.push(id);
    }
  });
  const cases: CaseSpec[] = [];
  for (const problemId of ids) {
    for (const scheme of suite.schemes) {
      for (const mesh of suite.meshes) {
        if (mesh.schemes && !mesh.schemes.includes(scheme)) continue;
        const degree = scheme === "lgr" ? (mesh.degree ?? 4) : undefined;
        const excluded = suite.exclude.some(
          (e) => (e.problem === undefined || e.problem === problemId) && (e.scheme === undefined || e.scheme === scheme) && (e.intervals === undefined || e.intervals === mesh.intervals),
        );
        if (excluded) continue;
        for (const tolerance of mesh.tolerances ?? [undefined]) {
          const key = caseKey(problemId, scheme, mesh.intervals, degree, mesh.variant, tolerance);
          if (cases.some((c) => c.key === key)) continue;
          cases.push({
            key, problemId, scheme, intervals: mesh.intervals,
            ...(degree !== undefined ? { degree } : {}), ...(mesh.variant ? { variant: mesh.variant } : {}), ...(tolerance !== undefined ? { tolerance } : {}),
          });
        }
      }
    }
  }
  return cases;
}
