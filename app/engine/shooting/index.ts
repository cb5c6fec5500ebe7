/** Shooting refinement: public entry points (see DEVELOPERS.md, "Shooting refinement"). */
export { refineProblem, meshLabel, arcLabels } from "./refine-problem";
export type { RefineProblemOptions, RefineProblemReport } from "./refine-problem";
export { refineFromSolution } from "./refine";
export type { RefineOptions, RefineReport, RefinedArc, RefinedTrajectory } from "./refine";
export { OptimalityConditions } from "./conditions";
export { directSolve } from "./direct";
