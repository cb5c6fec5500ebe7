/**
 * One state/control/costate over time: the solver's recovered series (solid) and the problem's
 * reference (dashed), each on its own time grid (numeric x axis). Fixed size, drawn after
 * hydration (recharts renders an empty wrapper on the server).
 */
import { CartesianGrid, Legend, Line, LineChart, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";
import type { Series } from "~/models/cases.server";

function points(s: Series | null, name: string): { t: number; v: number }[] {
  const col = s?.columns[name];
  if (!s || !col) return [];
  return s.t.map((t, i) => ({ t, v: col[i]! })).filter((p) => Number.isFinite(p.t) && Number.isFinite(p.v));
}

/** Axis ticks in at most 4 significant digits. */
function tick(v: number): string {
  if (!Number.isFinite(v)) return "";
  const a = Math.abs(v);
  return a !== 0 && (a >= 1e5 || a < 1e-3) ? v.toExponential(2) : String(Number(v.toPrecision(4)));
}

/**
 * Y domain: recharts' own rounded "auto" domain, except for a nearly constant series (a costate
 * of a state that does not enter the dynamics), which gets a span of 1e-3 of its magnitude so
 * that it draws flat with distinct 4-digit ticks instead of repeating one tick label.
 */
function yDomain(series: { v: number }[]): [number, number] | ["auto", "auto"] {
  if (series.length === 0) return ["auto", "auto"];
  let lo = Infinity;
  let hi = -Infinity;
  for (const p of series) {
    if (p.v < lo) lo = p.v;
    if (p.v > hi) hi = p.v;
  }
  const mid = 0.5 * (lo + hi);
  const minSpan = Math.max(1e-3 * Math.abs(mid), 1e-9);
  return hi - lo >= minSpan ? ["auto", "auto"] : [mid - minSpan, mid + minSpan];
}

export function TrajectoryChart({ name, solution, reference, referenceName, width = 420, height = 220, step = false }: { name: string; solution: Series | null; reference: Series | null; referenceName?: string; width?: number; height?: number; step?: boolean }) {
  const sol = points(solution, name);
  const ref = points(reference, referenceName ?? name);
  return (
    <figure className="card min-w-0 p-3" style={{ flex: "1 1 18rem", maxWidth: width + 24 }} data-testid="trajectory-chart" data-series={name}>
      <figcaption className="mb-1 text-sm font-medium">{name}</figcaption>
      {/* The chart takes the card's width (up to `width`): measured on the client. */}
      <div style={{ width: "100%", maxWidth: width, height }}>
      <ResponsiveContainer width="100%" height={height}>
      <LineChart margin={{ top: 5, right: 12, bottom: 5, left: 0 }}>
        <CartesianGrid stroke="var(--aw-line)" strokeDasharray="2 4" />
        <XAxis dataKey="t" type="number" domain={["dataMin", "dataMax"]} tick={{ fontSize: 11, fill: "var(--aw-muted)" }} tickFormatter={tick} allowDuplicatedCategory={false} />
        <YAxis type="number" domain={yDomain([...sol, ...ref])} tick={{ fontSize: 11, fill: "var(--aw-muted)" }} tickFormatter={tick} width={64} />
        <Tooltip contentStyle={{ background: "var(--aw-surface)", border: "1px solid var(--aw-line)", fontSize: 12 }} formatter={(v) => (typeof v === "number" ? v.toPrecision(6) : String(v))} labelFormatter={(t) => `t = ${typeof t === "number" ? t.toPrecision(5) : t}`} />
        <Legend wrapperStyle={{ fontSize: 11 }} />
        {ref.length ? <Line data={ref} dataKey="v" name="reference" stroke="var(--aw-muted)" strokeDasharray="5 4" dot={false} isAnimationActive={false} /> : null}
        {sol.length ? <Line data={sol} dataKey="v" name="solution" type={step ? "stepAfter" : "linear"} stroke="var(--aw-accent)" strokeWidth={2} dot={sol.length < 60 ? { r: 2 } : false} isAnimationActive={false} /> : null}
      </LineChart>
      </ResponsiveContainer>
      </div>
    </figure>
  );
}
