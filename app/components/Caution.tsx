/** Shown on every result page. */
export function FlightCaution() {
  return (
    <p className="rounded-lg border border-warn/50 bg-warn/10 px-3 py-2 text-sm" role="note" data-testid="flight-caution">
      <strong>Caution:</strong> these are numerical benchmarks of a solver against reference answers. They do not certify any trajectory for flight; a trajectory flown needs its own verification and review.
    </p>
  );
}

export function DemoBadge({ show }: { show: boolean }) {
  if (!show) return null;
  return (
    <span className="rounded-full border border-warn px-2 py-0.5 text-xs font-semibold uppercase tracking-wide text-warn" data-testid="demo-badge" title="Seeded demo data, not a measurement of this machine">
      demo data
    </span>
  );
}

/** Numbers in a readable short form: 3 significant digits, exponent for very small/large. */
export function fmt(v: number | null | undefined, digits = 3): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return "—";
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) return v.toExponential(digits - 1);
  return Number(v.toPrecision(digits)).toString();
}

export function fmtSeconds(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return "—";
  if (v < 1e-3) return `${(v * 1e6).toFixed(0)} µs`;
  if (v < 1) return `${(v * 1e3).toFixed(1)} ms`;
  if (v < 120) return `${v.toFixed(2)} s`;
  return `${Math.floor(v / 60)} min ${Math.round(v % 60)} s`;
}

export function fmtDate(ms: number | null | undefined): string {
  if (!ms) return "—";
  return new Date(ms).toISOString().replace("T", " ").slice(0, 16) + " UTC";
}
