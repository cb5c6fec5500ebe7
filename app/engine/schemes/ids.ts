/**
 * The scheme ids alone, without the schemes: what a command line or a form needs to check
 * `--scheme` and print its usage without loading the engine (index.ts holds the schemes).
 */
import type { SchemeId } from "./types";

/** The transcriptions Arcwatch runs, in display order (the keys of the registry in ./index.ts). */
export const SCHEMES = ["euler", "trapezoidal", "hermite-simpson", "lgr", "rk4-shooting"] as const;
export type SchemeName = (typeof SCHEMES)[number];

// A Record, so that adding an id to SchemeId without listing it here fails to compile.
const KNOWN: Record<SchemeId, true> = { euler: true, trapezoidal: true, "hermite-simpson": true, lgr: true, "rk4-shooting": true };

export const SCHEME_IDS = Object.keys(KNOWN) as SchemeId[];

export function isSchemeId(id: string): id is SchemeId {
  return Object.prototype.hasOwnProperty.call(KNOWN, id);
}
