/** The scheme list lives with the engine (app/engine/schemes/ids.ts); re-exported for the pages. */
export { SCHEMES, type SchemeName } from "~/engine/schemes/ids";
