/**
 * The whitelist under random and hostile input (≥ 10,000 cases): parseExpression either returns
 * a tree and no issues, or issues and no tree; it never throws and never hangs; a tree it accepts
 * compiles, and the generated code contains only the code generator's own vocabulary (no name or
 * text from the input). Canary: inputs that would set globalThis.__arcwatchCanary if evaluated.
 * Longer fuzzing of whole problem files: FUZZ_RUNS=20000 npx vitest run tests/expr/hostile.test.ts
 */
import { afterAll, describe, expect, it } from "vitest";
import fc from "fast-check";
import { parseExpression } from "~/engine/expr/validate";
import { compilePointFunction } from "~/engine/expr/compile";
import { compileProblemSource } from "~/engine/problem/compile";
import { smoothExpression } from "./gen";

const NAMES = ["x", "v", "Tmax", "h0", "m"];
const scope = { names: new Set(NAMES), endpointStates: new Set(["x", "v"]) };

const TOKENS = [
  "x", "v", "Tmax", "h0", "m", "1", "2.5", "1e3", "1e999", "0x1F", "0b101", "2i", "Infinity", "NaN", "pi", "e", "true", "null",
  "+", "-", "*", "/", "^", ".^", "%", "mod", "!", "'", "==", "<", ">=", "and", "not", "xor", "|", "&", "~", "<<", "to",
  "(", ")", "[", "]", "{", "}", ",", ";", "\n", ":", "?", "=", ".", "..", "\\", "`", "\"", "$", "@", "#",
  "exp(", "log(", "sqrt(", "atan2(", "min(", "max(", "abs(", "sign(", "initial(", "final(",
  "constructor", "__proto__", "prototype", "import(", "require(", "process", "globalThis", "this", "eval(", "Function(",
  "f(x)=", "a.b", "[1,2]", "x[0]", "'str'", "\"str\"", "5 cm", "a ? b : c", "1:3", "{a: 1}", "x = 1",
  "х", "ν", "Τmax", "\u200b", "\u0000", "\uFEFF", "😀", "ﬀ", "𝑥",
];

const soup = (tokens: string[]) =>
  fc.tuple(fc.array(fc.constantFrom(...tokens), { minLength: 1, maxLength: 30 }), fc.constantFrom("", " ")).map(([ts, sep]) => ts.join(sep));
const tokenSoup = soup(TOKENS);
/** Mostly valid tokens, so that a fair share of inputs is accepted and compiled. */
const validishSoup = soup(["x", "v", "Tmax", "h0", "1", "2.5", "+", "-", "*", "/", "^", "(", ")", "exp(", "sin(", "atan2(", "min(", ",", "final(x)"]);
const nested = fc.integer({ min: 1, max: 5000 }).chain((n) =>
  fc.constantFrom(
    "(".repeat(n) + "x" + ")".repeat(n),
    "-".repeat(n) + "x",
    "x^".repeat(n) + "x",
    "x+".repeat(n) + "x",
    "exp(".repeat(n) + "x" + ")".repeat(n),
    "sin(".repeat(n),
    "[".repeat(n),
  ),
);
const CANARY_INPUTS = [
  "globalThis.__arcwatchCanary = 1",
  "constructor.constructor(\"globalThis.__arcwatchCanary=1\")()",
  "x.constructor.constructor('globalThis.__arcwatchCanary=1')()",
  "import('fs')",
  "__proto__.polluted = 1",
  "x; globalThis.__arcwatchCanary = 1",
  "f(x) = globalThis.__arcwatchCanary",
  "evaluate(\"globalThis.__arcwatchCanary=1\")",
  "`${globalThis.__arcwatchCanary = 1}`",
];
const hostile = fc.oneof(
  { weight: 4, arbitrary: tokenSoup },
  { weight: 3, arbitrary: validishSoup },
  { weight: 2, arbitrary: smoothExpression.map((e) => e.replace(/x[0-3]/g, "x")) },
  { weight: 2, arbitrary: fc.string({ maxLength: 200 }) },
  { weight: 2, arbitrary: fc.string({ unit: "grapheme", maxLength: 60 }) },
  { weight: 1, arbitrary: fc.string({ unit: "binary", maxLength: 60 }) },
  { weight: 1, arbitrary: nested },
  { weight: 1, arbitrary: fc.constantFrom(...CANARY_INPUTS) },
);

const VOCABULARY = new Set(["const", "function", "return", "M", "z", "w", "out", "e", "j", "h",
  "exp", "log", "sqrt", "sin", "cos", "tan", "atan", "sinh", "cosh", "tanh", "abs", "sign", "atan2", "min", "max", "pow"]);

function checkGenerated(src: string) {
  for (const word of src.match(/[A-Za-z_$][A-Za-z0-9_$]*/g) ?? []) {
    if (VOCABULARY.has(word) || /^v\d+$/.test(word) || /^e\d*$/.test(word)) continue;
    throw new Error(`generated code contains '${word}'`);
  }
  expect(src).not.toMatch(/["'`\\]/);
}

let slowest = 0;
let accepted = 0;
let refused = 0;

describe("hostile expressions", () => {
  afterAll(() => {
    console.log(`hostile expressions: ${accepted} accepted, ${refused} refused, slowest ${slowest.toFixed(1)} ms`);
  });

  it("12,000 random and hostile inputs: compile or refuse, never throw, never hang, never run", () => {
    fc.assert(
      fc.property(hostile, (text) => {
        const t0 = performance.now();
        const r = parseExpression(text, scope);
        if (r.node) {
          expect(r.issues).toEqual([]);
          const f = compilePointFunction([r.node], ["t", ...NAMES, "initial(x)", "final(x)", "initial(v)", "final(v)"], {});
          checkGenerated(f.source.eval + f.source.jac + f.source.hess);
          const z = new Float64Array(f.nIn).fill(0.5);
          const out = new Float64Array(1);
          f.eval(z, out);
          expect(typeof out[0]).toBe("number");
          accepted++;
        } else {
          expect(r.issues.length).toBeGreaterThan(0);
          for (const i of r.issues) {
            expect(typeof i.message).toBe("string");
            if (i.column !== undefined) expect(i.column).toBeGreaterThanOrEqual(1);
          }
          refused++;
        }
        const dt = performance.now() - t0;
        slowest = Math.max(slowest, dt);
        // a hang guard, not a speed target: one expression must never take seconds
        expect(dt).toBeLessThan(5000);
      }),
      { numRuns: 12_000 },
    );
    expect((globalThis as Record<string, unknown>).__arcwatchCanary).toBeUndefined();
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
  });

  it("3,000 random JSON documents and mutated problem files: errors, never an exception", () => {
    const base = {
      format: "arcwatch-problem/1", title: "t", description: "d",
      states: [{ name: "x" }], controls: [{ name: "u" }],
      dynamics: { x: "u" }, horizon: { finalTime: { fixed: 1 } }, objective: { sense: "min", running: "u^2" },
    };
    const mutated = fc.tuple(fc.constantFrom("dynamics.x", "objective.running", "states", "horizon", "title", "controls"), fc.oneof(fc.jsonValue(), hostile)).map(([where, v]) => {
      const doc = structuredClone(base) as Record<string, unknown>;
      if (where === "dynamics.x") (doc.dynamics as Record<string, unknown>).x = v;
      else if (where === "objective.running") (doc.objective as Record<string, unknown>).running = v;
      else doc[where] = v;
      return JSON.stringify(doc);
    });
    // a rich valid document; any one of its values (at any depth) replaced by junk
    const rich: Record<string, unknown> = {
      format: "arcwatch-problem/1", title: "t", description: "d", tags: ["smooth"],
      constants: { g: 9.8, k: "2*g", m0: { value: 3, unit: "kg" } },
      states: [{ name: "x", lower: 0, upper: "10*k" }, { name: "v", unit: "m/s" }, { name: "m", lower: "0.5*m0" }],
      controls: [{ name: "u", lower: -1, upper: 1 }],
      intermediates: [{ name: "D", expr: "v^2*exp(-x)" }],
      dynamics: { x: "v", v: "(u - D)/m - g", m: "-abs(u)" },
      horizon: { initialTime: 0, finalTime: { free: { lower: 1, upper: 9, guess: 3 } } },
      initial: { x: 0, v: 0, m: "m0" }, final: { x: { lower: 1 }, v: 0 },
      endpointConstraints: [{ name: "e", expr: "final(x) - initial(x) + tf", lower: 0 }],
      path: [{ name: "q", expr: "D", upper: 5 }],
      objective: { sense: "min", terminal: "tf", running: "u^2" },
      guess: { kind: "linear", states: { x: [0, 1] }, controls: { u: 0.5 } },
      reference: { objective: { value: 1, tolerance: 0.1, provenance: { kind: "analytic" } }, arcs: ["boundary:q"], switchingTimes: { values: [1, 2], tolerance: 0.1, provenance: { kind: "analytic" } } },
      defaults: { intervals: 10, degree: 3 },
    };
    const paths: (string | number)[][] = [];
    const walk = (v: unknown, p: (string | number)[]) => {
      if (p.length > 0) paths.push(p);
      if (Array.isArray(v)) v.forEach((x, k) => walk(x, [...p, k]));
      else if (v && typeof v === "object") for (const [k, x] of Object.entries(v)) walk(x, [...p, k]);
    };
    walk(rich, []);
    expect(compileProblemSource("rich", { problemJson: JSON.stringify(rich) }).ok).toBe(true);
    const deepMutated = fc.tuple(fc.integer({ min: 0, max: paths.length - 1 }), fc.oneof(fc.jsonValue(), hostile, fc.constant(undefined))).map(([k, junk]) => {
      const doc = structuredClone(rich);
      const p = paths[k];
      let o = doc as Record<string | number, unknown>;
      for (const seg of p.slice(0, -1)) o = o[seg] as Record<string | number, unknown>;
      o[p[p.length - 1]] = junk;
      return JSON.stringify(doc);
    });
    fc.assert(
      fc.property(fc.oneof(fc.json(), mutated, deepMutated, deepMutated, fc.string()), (text) => {
        const r = compileProblemSource("fuzz", { problemJson: text }, "fuzz/problem.json");
        if (!r.ok) {
          expect(r.errors.length).toBeGreaterThan(0);
          for (const e of r.errors) expect(e.message).not.toMatch(/internal compiler error/);
        }
      }),
      { numRuns: Number(process.env.FUZZ_RUNS ?? 3000) },
    );
  });
});
