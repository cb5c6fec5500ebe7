export { detectArcs, arcDefaults } from "./detect";
export { arcLabel, structureSignature } from "./types";
export type { Arc, ArcKind, ArcStructure, ArcDetectionOptions, ControlArcs } from "./types";
