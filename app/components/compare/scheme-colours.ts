/**
 * One colour per transcription scheme on every chart: the Okabe & Ito (2008) colour-blind-safe
 * palette defined once in app/vocabulary.ts (CSS variables in app/app.css follow the theme).
 */
import { SCHEME_PALETTE, schemeColour } from "~/vocabulary";

export const SCHEME_COLOURS: Record<string, string> = Object.fromEntries(Object.keys(SCHEME_PALETTE).map((s) => [s, schemeColour(s)]));

/** The scheme's colour; a scheme not in the palette is drawn in the muted ink. */
export const colourOf = schemeColour;
