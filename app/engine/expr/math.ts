/**
 * The one mathjs instance of the engine: only the expression parser and the node classes it
 * builds, made with mathjs's own `create` from their dependency lists. Importing `parse` from
 * the package's default instance builds all of mathjs's several hundred functions first
 * (about 2.5 s of CPU on the 2-core test machine, measured 2026-12-02); this instance is what
 * lets the bundled command line (scripts/build-cli.mjs) start a solve at once, since the bundler
 * keeps only what these factories reach. The trees are the same classes as the default
 * instance's, told apart by their `type` field as everywhere in the engine.
 */
import {
  create,
  parseDependencies,
  ConstantNodeDependencies,
  FunctionNodeDependencies,
  OperatorNodeDependencies,
  ParenthesisNodeDependencies,
  SymbolNodeDependencies,
} from "mathjs";

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
