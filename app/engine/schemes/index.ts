/** The registry of transcriptions: one module per scheme, one interface (types.ts). */
import type { Scheme, SchemeId } from "./types";
import { euler } from "./euler";
import { trapezoidal } from "./trapezoidal";
import { hermiteSimpson } from "./hermite-simpson";
import { lgr } from "./lgr";
import { rk4Shooting } from "./rk4-shooting";
import { SCHEME_IDS, isSchemeId } from "./ids";

export const schemes: Record<SchemeId, Scheme> = {
  euler,
  trapezoidal,
  "hermite-simpson": hermiteSimpson,
  lgr,
  "rk4-shooting": rk4Shooting,
};

export { SCHEME_IDS, isSchemeId } from "./ids";

/** The scheme with this id; throws an error listing the known ids otherwise. */
export function getScheme(id: string): Scheme {
  if (!isSchemeId(id)) throw new Error(`unknown scheme "${id}" (known: ${SCHEME_IDS.join(", ")})`);
  return schemes[id];
}
