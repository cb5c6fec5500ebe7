/**
 * Structure of problem.json (format "arcwatch-problem/1", see DEVELOPERS.md "Problem files"),
 * checked with zod. Semantic checks (names, scopes, bounds, files) are in compile.ts.
 *
 * Objects are strict: an unknown key (a typo such as "lowr") is an error with a suggestion.
 */
import * as z from "zod/mini";
import en from "zod/v4/locales/en.js";

// zod/mini: the same checks as zod's chainable build at about a third of its load cost (measured
// 2026-12-03, esbuild bundle on Node 20: 3.5 MB of resident memory against 10.3 MB), which every
// solver process pays. It loads no messages of its own; the English ones are the classic build's
// default, so the reported messages are the same.
z.config(en());

export const PROBLEM_FORMAT = "arcwatch-problem/1";

/** Declared names: a letter, then letters, digits or underscores; at most 64 characters. */
export const NAME_PATTERN = /^[A-Za-z][A-Za-z0-9_]*$/;
const Name = z.string({ error: "a name must be a string" }).check(
  z.maxLength(64, { error: "a name has at most 64 characters" }),
  z.regex(NAME_PATTERN, { error: "a name starts with a letter and has only letters, digits and '_'" }),
);

/** A CSV file next to problem.json (no directories). */
const FileName = z.string().check(
  z.regex(/^[A-Za-z0-9_-][A-Za-z0-9_.-]*\.csv$/, { error: "a file name like 'reference.csv' in the problem's folder" }),
);

/** An expression: mathjs text, or a plain number. */
const Expr = z.union([z.string(), z.number()], { error: "an expression must be a string or a number" });
/** A bound: a number, null (no bound) or an expression of constants. Omitted = no bound. */
const Bound = z.optional(z.union([z.number(), z.string(), z.null()], { error: "a bound is a number, null or an expression of constants" }));
/** A required number or an expression of constants. */
const NumberOrExpr = z.union([z.number(), z.string()], { error: "a number or an expression of constants" });

const Text = z.optional(z.string());
const NonEmpty = z.string().check(z.minLength(1));

export const VariableSchema = z.strictObject({
  name: Name,
  unit: Text,
  lower: Bound,
  upper: Bound,
  scale: z.optional(z.number().check(z.positive({ error: "scale must be a positive number" }))),
  description: Text,
});

export const ConstantSchema = z.union(
  [z.number(), z.string(), z.strictObject({ value: NumberOrExpr, unit: Text, description: Text })],
  { error: "a constant is a number, an expression of earlier constants, or { \"value\": ..., \"unit\": ... }" },
);

export const IntermediateSchema = z.strictObject({ name: Name, expr: Expr, unit: Text, description: Text });

export const RangeSchema = z.strictObject({ lower: Bound, upper: Bound });
/** An initial/final condition: a fixed value (number or expression of constants) or a range. */
export const ConditionSchema = z.union([z.number(), z.string(), RangeSchema], {
  error: "a condition is a number (fixed value), an expression of constants, or { \"lower\", \"upper\" }",
});

export const ConstraintSchema = z.strictObject({
  name: z.optional(Name),
  expr: Expr,
  lower: Bound,
  upper: Bound,
  unit: Text,
  description: Text,
});

export const HorizonSchema = z.strictObject({
  initialTime: z.optional(z.number()),
  finalTime: z.union(
    [
      z.strictObject({ fixed: NumberOrExpr }),
      z.strictObject({
        free: z.strictObject({ lower: NumberOrExpr, upper: NumberOrExpr, guess: z.optional(NumberOrExpr) }),
      }),
    ],
    { error: "finalTime is { \"fixed\": tf } or { \"free\": { \"lower\", \"upper\", \"guess\" } }" },
  ),
});

export const ObjectiveSchema = z.strictObject({
  sense: z.enum(["min", "max"], { error: "sense is \"min\" or \"max\"" }),
  terminal: z.optional(Expr),
  running: z.optional(Expr),
});

/** Guess values per name: a constant, or [start, end] for a straight line. */
const GuessValues = z.optional(z.record(
  z.string(),
  z.union([z.number(), z.tuple([z.number(), z.number()])], { error: "a guess value is a number or [start, end]" }),
));

export const GuessSchema = z.discriminatedUnion(
  "kind",
  [
    z.strictObject({ kind: z.literal("linear"), states: GuessValues, controls: GuessValues, finalTime: z.optional(z.number()) }),
    z.strictObject({ kind: z.literal("constant"), states: GuessValues, controls: GuessValues, finalTime: z.optional(z.number()) }),
    z.strictObject({ kind: z.literal("trajectory"), file: FileName, finalTime: z.optional(z.number()) }),
  ],
  { error: "guess.kind is \"linear\", \"constant\" or \"trajectory\"" },
);

export const ProvenanceSchema = z.discriminatedUnion(
  "kind",
  [
    z.strictObject({ kind: z.literal("analytic"), citation: Text, detail: Text }),
    z.strictObject({ kind: z.literal("published"), citation: NonEmpty, detail: Text }),
    z.strictObject({ kind: z.literal("fine-mesh"), detail: NonEmpty }),
    z.strictObject({ kind: z.literal("shooting"), detail: NonEmpty, residual: z.optional(z.number()) }),
  ],
  { error: "provenance.kind is \"analytic\", \"published\", \"fine-mesh\" or \"shooting\"" },
);

const Tolerance = z.number().check(z.positive({ error: "tolerance must be a positive number" }));

export const ReferenceValueSchema = z.strictObject({ value: z.number(), tolerance: Tolerance, provenance: ProvenanceSchema });

export const ReferenceSchema = z.strictObject({
  objective: z.optional(ReferenceValueSchema),
  finalTime: z.optional(ReferenceValueSchema),
  switchingTimes: z.optional(z.strictObject({ values: z.array(z.number()), tolerance: Tolerance, provenance: ProvenanceSchema })),
  arcs: z.optional(z.array(NonEmpty)),
  trajectory: z.optional(z.strictObject({ file: FileName, provenance: ProvenanceSchema, tolerance: z.optional(Tolerance) })),
});

export const DefaultsSchema = z.strictObject({
  intervals: z.optional(z.int().check(z.positive())),
  degree: z.optional(z.int().check(z.positive())),
});

export const ProblemFileSchema = z.strictObject({
  $schema: z.optional(z.string()),
  format: z.literal(PROBLEM_FORMAT, { error: `format must be "${PROBLEM_FORMAT}"` }),
  title: z.string().check(z.minLength(1, { error: "title must not be empty" })),
  description: z.string(),
  tags: z.optional(z.array(z.string())),
  constants: z.optional(z.record(z.string(), ConstantSchema)),
  states: z.array(VariableSchema).check(z.minLength(1, { error: "at least one state is needed" })),
  controls: z.optional(z.array(VariableSchema)),
  intermediates: z.optional(z.array(IntermediateSchema)),
  dynamics: z.record(z.string(), Expr),
  horizon: HorizonSchema,
  initial: z.optional(z.record(z.string(), ConditionSchema)),
  final: z.optional(z.record(z.string(), ConditionSchema)),
  endpointConstraints: z.optional(z.array(ConstraintSchema)),
  path: z.optional(z.array(ConstraintSchema)),
  objective: ObjectiveSchema,
  guess: z.optional(GuessSchema),
  reference: z.optional(ReferenceSchema),
  defaults: z.optional(DefaultsSchema),
});

export type ProblemFile = z.infer<typeof ProblemFileSchema>;
export type VariableSpec = z.infer<typeof VariableSchema>;
export type ConstraintSpec = z.infer<typeof ConstraintSchema>;
export type ProvenanceSpec = z.infer<typeof ProvenanceSchema>;

/**
 * Valid keys of the object at a JSON path (for "did you mean" on unrecognised keys), found by
 * walking the schema along the path.
 */
export function keysAtPath(path: readonly PropertyKey[]): string[] {
  let s: z.ZodMiniType | undefined = ProblemFileSchema;
  for (const seg of path) {
    s = s && step(s, seg);
    if (!s) return [];
  }
  return s ? objectKeys(s) : [];
}

function unwrap(s: z.ZodMiniType): z.ZodMiniType[] {
  const def = (s as unknown as { _zod: { def: Record<string, unknown> } })._zod.def;
  switch (def.type) {
    case "optional":
    case "nullable":
    case "default":
      return unwrap(def.innerType as z.ZodMiniType);
    case "union":
      return (def.options as z.ZodMiniType[]).flatMap(unwrap);
    default:
      return [s];
  }
}

function step(s: z.ZodMiniType, seg: PropertyKey): z.ZodMiniType | undefined {
  for (const u of unwrap(s)) {
    const def = (u as unknown as { _zod: { def: Record<string, unknown> } })._zod.def;
    if (def.type === "object" && typeof seg === "string") {
      const shape = def.shape as Record<string, z.ZodMiniType>;
      if (Object.hasOwn(shape, seg)) return shape[seg];
    } else if (def.type === "array" && typeof seg === "number") return def.element as z.ZodMiniType;
    else if (def.type === "record") return def.valueType as z.ZodMiniType;
  }
  return undefined;
}

function objectKeys(s: z.ZodMiniType): string[] {
  const keys: string[] = [];
  for (const u of unwrap(s)) {
    const def = (u as unknown as { _zod: { def: Record<string, unknown> } })._zod.def;
    if (def.type === "object") keys.push(...Object.keys(def.shape as object));
  }
  return [...new Set(keys)];
}
