/**
 * The error estimate of every mesh interval over time: one horizontal step per interval on a log10
 * axis, with the refinement tolerance as a dashed line when the case was refined. An interval whose
 * estimate is 0 (exact to rounding) is drawn at the bottom of the axis, one without a finite estimate
 * at the top, and either is said below the chart.
 * Fixed size, drawn after hydration (recharts renders an empty wrapper on the server).
 */
import { CartesianGrid, Line, LineChart, ReferenceLine, Tooltip, XAxis, YAxis } from "recharts";
import { logDomain, logTickLabel, logTicks, loggable } from "~/components/compare/log-axis";

function tickT(v: number): string {
  if (!Number.isFinite(v)) return "";
  const a = Math.abs(v);
  return a !== 0 && (a >= 1e5 || a < 1e-3) ? v.toExponential(2) : String(Number(v.toPrecision(4)));
}

export function MeshErrorChart({ t, error, tolerance, width = 640, height = 240 }: { t: number[]; error: number[]; tolerance: number | null; width?: number; height?: number }) {
  const domain = logDomain([...error, ...(tolerance !== null ? [tolerance] : [])]);
  if (!domain) return <p className="text-sm text-muted">Every interval's estimate is zero (the solution satisfies the dynamics to rounding).</p>;
  const [floor, ceiling] = domain;
  // stepAfter: the value of interval k from t_k to t_{k+1}; the last breakpoint repeats the last value
  const data = t.map((tk, k) => {
    const e = error[Math.min(k, error.length - 1)]!;
    return { t: tk, v: loggable(e) ? Math.log10(e) : e === 0 ? floor : ceiling, e };
  });
  const zeros = error.filter((e) => e === 0).length;
  const unbounded = error.filter((e) => !Number.isFinite(e)).length;
  const ticks = logTicks(domain);
  return (
    <figure className="card p-3" data-testid="mesh-error-chart">
      <LineChart width={width} height={height} data={data} margin={{ top: 8, right: 16, bottom: 5, left: 0 }}>
        <CartesianGrid stroke="var(--aw-line)" strokeDasharray="2 4" />
        <XAxis dataKey="t" type="number" domain={["dataMin", "dataMax"]} tick={{ fontSize: 11, fill: "var(--aw-muted)" }} tickFormatter={tickT} />
        <YAxis type="number" domain={domain} ticks={ticks} allowDataOverflow tick={{ fontSize: 11, fill: "var(--aw-muted)" }} tickFormatter={(v: number) => logTickLabel(v, v === ticks[0] || v === ticks[ticks.length - 1])} width={56} />
        <Tooltip
          contentStyle={{ background: "var(--aw-surface)", border: "1px solid var(--aw-line)", fontSize: 12 }}
          formatter={(_v, _n, item) => {
            const e = (item?.payload as { e?: number } | undefined)?.e;
            return [typeof e === "number" ? e.toExponential(3) : "—", "estimate"];
          }}
          labelFormatter={(x) => `interval from t = ${typeof x === "number" ? x.toPrecision(5) : x}`}
        />
        {tolerance !== null && loggable(tolerance) ? <ReferenceLine y={Math.log10(tolerance)} stroke="var(--aw-bad)" strokeDasharray="6 4" label={{ value: "tolerance", position: "insideTopRight", fontSize: 11, fill: "var(--aw-muted)" }} /> : null}
        <Line dataKey="v" name="estimate" type="stepAfter" stroke="var(--aw-accent)" strokeWidth={2} dot={false} isAnimationActive={false} />
      </LineChart>
      <figcaption className="mt-1 text-xs text-muted">
        x: time; y: estimated relative error of each mesh interval (log scale), one step per interval.
        {zeros > 0 ? ` ${zeros} interval${zeros > 1 ? "s have" : " has"} an estimate of 0, drawn at the bottom.` : ""}
        {unbounded > 0 ? ` ${unbounded} interval${unbounded > 1 ? "s have" : " has"} no finite estimate (the residual overflowed), drawn at the top.` : ""}
      </figcaption>
    </figure>
  );
}
