/**
 * The shooting refinement's view of ODEX. The package itself is loaded in one place only,
 * app/engine/analysis/odex.ts (odex 2.0.4 ships TypeScript source without declarations; see
 * DEVELOPERS.md, Decisions); this module re-exports its typed solver.
 */
export { createOdexSolver, type OdexDerivative, type OdexOutput, type OdexResult, type OdexSolver } from "../analysis/odex";
