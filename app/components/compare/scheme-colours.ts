/**
 * One colour per transcription scheme on every comparison chart, taken from the app's palette
 * (app/app.css) as CSS variables so that each chart follows the light or dark theme. The same
 * scheme keeps the same colour in the convergence, work–precision and profile charts.
 */
export const SCHEME_COLOURS: Record<string, string> = {
  euler: "var(--aw-bad)",
  trapezoidal: "var(--aw-focus)",
  "hermite-simpson": "var(--aw-good)",
  lgr: "var(--aw-accent)",
  "rk4-shooting": "var(--aw-warn)",
};

/** The scheme's colour; a scheme not listed above is drawn in the muted ink. */
export const colourOf = (scheme: string): string => SCHEME_COLOURS[scheme] ?? "var(--aw-muted)";
