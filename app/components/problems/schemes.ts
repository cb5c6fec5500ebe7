/** The transcriptions Arcwatch runs, in display order (ids as in app/engine/schemes). */
export const SCHEMES = ["euler", "trapezoidal", "hermite-simpson", "lgr", "rk4-shooting"] as const;
export type SchemeName = (typeof SCHEMES)[number];
