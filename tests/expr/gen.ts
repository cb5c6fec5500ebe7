/**
 * Random smooth expressions for the derivative property tests: mathjs text over inputs
 * x0..x{n-1}, built so that every subexpression stays in the domain and moderately sized
 * (log and sqrt of 1 + e², denominators 1.5 + e², exp of atan(e), tan of 0.4·atan(e),
 * powers with positive bases, periodic functions of atan(e) so that a large argument cannot
 * oscillate within one difference step), so that central differences are meaningful everywhere.
 */
import fc from "fast-check";

export const N_INPUTS = 4;

const leaf = fc.oneof(
  fc.integer({ min: 0, max: N_INPUTS - 1 }).map((j) => `x${j}`),
  fc.double({ min: -3, max: 3, noNaN: true, noDefaultInfinity: true }).map((v) => {
    const r = Math.round(v * 100) / 100;
    return r < 0 ? `(${r})` : `${r}`;
  }),
  fc.constant("pi"),
);

type Wrap = (a: string, b: string) => string;
const unary: Wrap[] = [
  (a) => `-(${a})`,
  (a) => `exp(atan(${a}))`,
  (a) => `log(1 + (${a})^2)`,
  (a) => `sqrt(1 + (${a})^2)`,
  (a) => `sin(2*atan(${a}))`,
  (a) => `cos(2*atan(${a}))`,
  (a) => `tan(0.4*atan(${a}))`,
  (a) => `atan(${a})`,
  (a) => `sinh(atan(${a}))`,
  (a) => `cosh(atan(${a}))`,
  (a) => `tanh(${a})`,
  (a) => `(${a})^2`,
  (a) => `(${a})^3`,
  (a) => `(1 + (${a})^2)^(-0.5)`,
  (a) => `(2 + sin(atan(${a})))^1.7`,
];
const binary: Wrap[] = [
  (a, b) => `(${a}) + (${b})`,
  (a, b) => `(${a}) - (${b})`,
  (a, b) => `(${a}) * (${b})`,
  (a, b) => `(${a}) / (1.5 + (${b})^2)`,
  (a, b) => `atan2(${a}, 2 + (${b})^2)`,
  (a, b) => `(1.2 + sin(atan(${a})))^(cos(atan(${b})))`,
  (a, b) => `2(${a}) (${b})`, // implicit multiplication
];

const { expr } = fc.letrec<{ expr: string }>((tie) => ({
  expr: fc.oneof(
    { depthSize: "medium", maxDepth: 6, withCrossShrink: true },
    leaf,
    fc.tuple(fc.integer({ min: 0, max: unary.length - 1 }), tie("expr")).map(([k, a]) => unary[k](a, "")),
    fc.tuple(fc.integer({ min: 0, max: binary.length - 1 }), tie("expr"), tie("expr")).map(([k, a, b]) => binary[k](a, b)),
  ),
}));

/** A random smooth expression of x0..x3. */
export const smoothExpression = expr.filter((s) => s.length < 1500);

/** A random point with coordinates in [-2, 2]. */
export const point = fc.array(fc.double({ min: -2, max: 2, noNaN: true, noDefaultInfinity: true }), {
  minLength: N_INPUTS,
  maxLength: N_INPUTS,
});

export const INPUT_NAMES = Array.from({ length: N_INPUTS }, (_, j) => `x${j}`);
