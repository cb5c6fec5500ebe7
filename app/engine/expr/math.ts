/**
 * The one mathjs instance of the engine: only the expression parser and the node classes it
 * builds, made with mathjs's own `create` from their dependency lists. Importing `parse` from
 * the package's default instance builds all of mathjs's several hundred functions first
 * (about 2.5 s of CPU on the 2-core test machine, measured 2026-12-02); this instance is what
 * lets the bundled command line (scripts/build-cli.mjs) start a solve at once, since the bundler
 * keeps only what these factories reach. The trees are the same classes as the default
 * instance's, told apart by their `type` field as everywhere in the engine.
 *
 * The factories come from mathjs's number-only entry (`mathjs/number`, same parser, same node
 * classes): the full entry's SymbolNode depends on the Unit class, which brings units, BigNumber,
 * Complex, Fraction and the matrix types with it, although a parsed tree holds plain numbers
 * only. Measured 2026-12-03 (2-core machine, three runs each): the side-by-side child's loaded
 * process 60 MB instead of 74–76 MB, a 20-interval trapezoidal `arcwatch solve` 0.35–0.38 s and
 * 81 MB instead of 0.41–0.47 s and 88 MB.
 */
import {
  create,
  parseDependencies,
  ConstantNodeDependencies,
  FunctionNodeDependencies,
  OperatorNodeDependencies,
  ParenthesisNodeDependencies,
  SymbolNodeDependencies,
} from "mathjs/number";

const math = create({
  parseDependencies,
  ConstantNodeDependencies,
  FunctionNodeDependencies,
  OperatorNodeDependencies,
  ParenthesisNodeDependencies,
  SymbolNodeDependencies,
});

export const parse = math.parse;
export const ConstantNode = math.ConstantNode;
export const FunctionNode = math.FunctionNode;
export const OperatorNode = math.OperatorNode;
export const ParenthesisNode = math.ParenthesisNode;
export const SymbolNode = math.SymbolNode;
