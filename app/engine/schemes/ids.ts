/** The transcriptions Arcwatch runs, in display order (the keys of the registry in ./index.ts). */
export const SCHEMES = ["euler", "trapezoidal", "hermite-simpson", "lgr", "rk4-shooting"] as const;
export type SchemeName = (typeof SCHEMES)[number];
