/**
 * One state/control/costate over time: the solver's recovered series (solid) and the problem's
 * reference (dashed), each on its own time grid (numeric x axis). Fixed size, drawn after
 * hydration (recharts renders an empty wrapper on the server).
 */
import { CartesianGrid, Legend, Line, LineChart, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";
import type { Series } from "~/models/cases.server";
import { niceTicks } from "./ticks";

function points(s: Series | null, name: string): { t: number; v: number }[] {
  const col = s?.columns[name];
  if (!s || !col) return [];
  return s.t.map((t, i) => ({ t, v: col[i]! })).filter((p) => Number.isFinite(p.t) && Number.isFinite(p.v));
}

/** Bounds of a list of points' times or values. */
function bounds(xs: number[]): [number, number] | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (const x of xs) {
    if (x < lo) lo = x;
    if (x > hi) hi = x;
  }
  return lo <= hi ? [lo, hi] : null;
}

export function TrajectoryChart({ name, solution, reference, referenceName, width = 420, height = 220, step = false }: { name: string; solution: Series | null; reference: Series | null; referenceName?: string; width?: number; height?: number; step?: boolean }) {
  const sol = points(solution, name);
  const ref = points(reference, referenceName ?? name);
  // round ticks with labels that differ (a nearly constant costate included): charts/ticks.ts
  const tb = bounds([...sol, ...ref].map((p) => p.t));
  const vb = bounds([...sol, ...ref].map((p) => p.v));
  const xPlan = tb ? niceTicks(tb[0], tb[1], 6, true) : null;
  const yPlan = vb ? niceTicks(vb[0], vb[1], 5) : null;
  return (
    <figure className="card min-w-0 p-3" style={{ flex: "1 1 18rem", maxWidth: width + 24 }} data-testid="trajectory-chart" data-series={name}>
      <figcaption className="mb-1 text-sm font-medium">{name}</figcaption>
      {/* The chart takes the card's width (up to `width`): measured on the client. */}
      <div style={{ width: "100%", maxWidth: width, height }}>
      <ResponsiveContainer width="100%" height={height}>
      <LineChart margin={{ top: 5, right: 12, bottom: 5, left: 0 }}>
        <CartesianGrid stroke="var(--aw-line)" strokeDasharray="2 4" />
        <XAxis dataKey="t" type="number" domain={xPlan?.domain ?? ["dataMin", "dataMax"]} ticks={xPlan?.ticks} tick={{ fontSize: 11, fill: "var(--aw-muted)" }} tickFormatter={xPlan?.format} allowDuplicatedCategory={false} />
        <YAxis type="number" domain={yPlan?.domain ?? ["auto", "auto"]} ticks={yPlan?.ticks} tick={{ fontSize: 11, fill: "var(--aw-muted)" }} tickFormatter={yPlan?.format} width={72} />
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
