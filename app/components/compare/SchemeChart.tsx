/**
 * The comparison page's chart (recharts): one or more series per scheme on linear or base-10
 * logarithmic axes — measured points (markers, with a tooltip), lines through them, fitted
 * lines, dashed guide lines (theoretical slopes) and right-continuous step functions
 * (performance profiles). Log axes plot log10 values with power-of-ten tick labels
 * (./log-axis.ts); a linear axis without a fixed domain is widened to round
 * 1-2-5 steps (./linear-axis.ts). Fixed height, width measured on the client up to `width` (recharts renders
 * an empty wrapper on the server and draws after hydration). The legend is plain HTML under
 * the chart. Each line's layer carries the class `aw-series-<name>` and each marker
 * `data-series=<name>`, so that a page (or a test) can find a series' drawing.
 */
import { CartesianGrid, ComposedChart, Line, ResponsiveContainer, Scatter, Tooltip, XAxis, YAxis } from "recharts";
import { niceLinear } from "./linear-axis";
import { logDomain, loggable, logTickLabel, logTicks } from "./log-axis";

export interface ChartSeries {
  /** Unique key (e.g. the scheme, or "lgr-theory"). */
  name: string;
  colour: string;
  points: { x: number; y: number }[];
  /**
   * "markers" (default): points only; "line": points joined in x order; "fit": a solid line
   * without markers; "guide": a dashed line without markers; "step": ρ(x) = y_k on
   * [x_k, x_{k+1}), held to the right edge of the x domain.
   */
  style?: "markers" | "line" | "fit" | "step" | "guide";
  /** Legend text; defaults to name; "" leaves the series out of the legend. */
  label?: string;
}

interface Datum {
  x: number;
  y: number;
  rawX: number;
  rawY: number;
  label: string;
}

interface AxisPlan {
  domain: [number, number];
  ticks: number[] | undefined;
  /** Tick label of the i-th tick at plotted coordinate t. */
  fmt: (t: number, i: number) => string;
  /** Plotted coordinate → value. */
  from: (t: number) => number;
  /** Value → plotted coordinate. */
  to: (v: number) => number;
  ok: (v: number) => boolean;
}

function linearTick(v: number): string {
  if (!Number.isFinite(v)) return "";
  const a = Math.abs(v);
  return a !== 0 && (a >= 1e5 || a < 1e-3) ? v.toExponential(1) : String(Number(v.toPrecision(4)));
}

/** A labelled tick of a linear axis (e.g. the rows of a one-dimensional strip chart). */
export interface NamedTick {
  at: number;
  label: string;
}

function axisPlan(values: number[], log: boolean, fixed: [number, number] | undefined, named?: NamedTick[]): AxisPlan | null {
  if (log) {
    const domain = fixed ? ([Math.log10(fixed[0]), Math.log10(fixed[1])] as [number, number]) : logDomain(values);
    if (!domain) return null;
    const ticks = logTicks(domain);
    return { domain, ticks, fmt: (t, i) => logTickLabel(t, i === 0 || i === ticks.length - 1), from: (t) => 10 ** t, to: Math.log10, ok: loggable };
  }
  const fin = values.filter(Number.isFinite);
  if (fin.length === 0) return null;
  let [lo, hi] = fixed ?? [Math.min(...fin), Math.max(...fin)];
  if (hi === lo) [lo, hi] = [lo - 1, hi + 1];
  if (named?.length) {
    const labelAt = (t: number) => named.find((n) => Math.abs(n.at - t) < 1e-9)?.label ?? linearTick(t);
    return { domain: [lo, hi], ticks: named.map((n) => n.at), fmt: labelAt, from: (t) => t, to: (v) => v, ok: Number.isFinite };
  }
  if (fixed) return { domain: [lo, hi], ticks: undefined, fmt: linearTick, from: (t) => t, to: (v) => v, ok: Number.isFinite };
  const nice = niceLinear(lo, hi);
  return { domain: nice.domain, ticks: nice.ticks, fmt: linearTick, from: (t) => t, to: (v) => v, ok: Number.isFinite };
}

const fmtRaw = (v: number) => (Math.abs(v) >= 1e-2 && Math.abs(v) < 1e4 ? String(Number(v.toPrecision(4))) : v.toExponential(2));

function PointTooltip({ active, payload, xLabel, yLabel }: { active?: boolean; payload?: { payload?: Datum }[]; xLabel: string; yLabel: string }) {
  const d = active ? payload?.[0]?.payload : undefined;
  if (!d) return null;
  return (
    <div className="card p-2 text-xs" data-testid="chart-tooltip">
      <p className="font-semibold">{d.label}</p>
      <p className="num">
        {xLabel}: {fmtRaw(d.rawX)}
      </p>
      <p className="num">
        {yLabel}: {fmtRaw(d.rawY)}
      </p>
    </div>
  );
}

function LegendIcon({ s }: { s: ChartSeries }) {
  const style = s.style ?? "markers";
  return (
    <svg width={22} height={10} aria-hidden="true">
      {style !== "markers" ? <line x1={0} x2={22} y1={5} y2={5} stroke={s.colour} strokeWidth={style === "guide" ? 1.4 : 2} strokeDasharray={style === "guide" ? "5 3" : undefined} /> : null}
      {style === "markers" || style === "line" ? <circle cx={11} cy={5} r={3.5} fill={s.colour} /> : null}
    </svg>
  );
}

export function SchemeChart({
  series,
  title,
  xLabel,
  yLabel,
  logX = false,
  logY = false,
  xDomain,
  yDomain,
  yTicks,
  yAxisWidth = 62,
  width = 640,
  height = 300,
  testId,
}: {
  series: ChartSeries[];
  /** Read by screen readers (the svg's title) and shown as the chart's accessible name. */
  title: string;
  xLabel: string;
  yLabel: string;
  logX?: boolean;
  logY?: boolean;
  /** Fixed x domain in data units (not log10). */
  xDomain?: [number, number];
  yDomain?: [number, number];
  /** Ticks with their own labels on a linear y axis (ignored when logY), e.g. the rows of a strip chart. */
  yTicks?: NamedTick[];
  /** Width in px reserved for the y tick labels. */
  yAxisWidth?: number;
  /** Largest width in px (the chart fills its container up to this). */
  width?: number;
  height?: number;
  testId?: string;
}) {
  const xPlan = axisPlan(
    series.flatMap((s) => s.points.map((p) => p.x)),
    logX,
    xDomain,
  );
  const yPlan = axisPlan(
    series.flatMap((s) => s.points.map((p) => p.y)),
    logY,
    yDomain,
    yTicks,
  );
  if (!xPlan || !yPlan) {
    return (
      <div className="flex items-center justify-center text-sm text-muted" style={{ maxWidth: width, height }} data-testid={testId} data-empty="true">
        No data to plot.
      </div>
    );
  }
  const data = (s: ChartSeries): Datum[] =>
    s.points
      .filter((p) => xPlan.ok(p.x) && yPlan.ok(p.y))
      .sort((a, b) => a.x - b.x)
      .map((p) => ({ x: xPlan.to(p.x), y: yPlan.to(p.y), rawX: p.x, rawY: p.y, label: s.label || s.name }));
  const described = series.filter((s) => s.label !== "");
  const desc = `${yLabel}${logY ? " (log scale)" : ""} against ${xLabel}${logX ? " (log scale)" : ""}; series: ${described.map((s) => s.label ?? s.name).join("; ")}.`;
  const tick = { fontSize: 10, fill: "var(--aw-muted)" };
  const axisLabel = { fontSize: 11, fill: "var(--aw-ink)" };
  return (
    <figure className="space-y-1 overflow-x-auto" data-testid={testId} aria-label={title}>
      <div style={{ width: "100%", maxWidth: width, minWidth: 0, height }}>
        <ResponsiveContainer width="100%" height={height}>
          <ComposedChart margin={{ top: 8, right: 14, bottom: 22, left: 8 }} title={title} desc={desc}>
            <CartesianGrid stroke="var(--aw-line)" strokeDasharray="2 4" />
            <XAxis
              dataKey="x"
              type="number"
              domain={xPlan.domain}
              ticks={xPlan.ticks}
              tickFormatter={xPlan.fmt}
              allowDataOverflow
              interval={0}
              tick={tick}
              stroke="var(--aw-line)"
              label={{ value: xLabel, position: "insideBottom", offset: -14, ...axisLabel }}
            />
            <YAxis
              dataKey="y"
              type="number"
              domain={yPlan.domain}
              ticks={yPlan.ticks}
              tickFormatter={yPlan.fmt}
              allowDataOverflow
              interval={0}
              tick={tick}
              stroke="var(--aw-line)"
              width={yAxisWidth}
              label={{ value: yLabel, angle: -90, position: "insideLeft", offset: 4, style: { textAnchor: "middle" }, ...axisLabel }}
            />
            <Tooltip shared={false} cursor={false} content={<PointTooltip xLabel={xLabel} yLabel={yLabel} />} />
            {series.flatMap((s) => {
              const d = data(s);
              if (d.length === 0) return [];
              const style = s.style ?? "markers";
              const out = [];
              if (style === "step") {
                const last = d[d.length - 1]!;
                const held = [...d, { ...last, x: xPlan.domain[1], rawX: xPlan.from(xPlan.domain[1]) }];
                out.push(
                  <Line
                    key={`${s.name}-step`}
                    className={`aw-series-${s.name}`}
                    data={held}
                    dataKey="y"
                    name={s.label || s.name}
                    type="stepAfter"
                    stroke={s.colour}
                    strokeWidth={2}
                    dot={false}
                    activeDot={false}
                    isAnimationActive={false}
                  />,
                );
              }
              if (style === "line" || style === "fit" || style === "guide") {
                out.push(
                  <Line
                    key={`${s.name}-line`}
                    className={`aw-series-${s.name}`}
                    data={d}
                    dataKey="y"
                    name={s.label || s.name}
                    stroke={s.colour}
                    strokeWidth={style === "guide" ? 1.4 : style === "fit" ? 1.6 : 1.8}
                    strokeDasharray={style === "guide" ? "6 4" : undefined}
                    strokeOpacity={style === "fit" ? 0.8 : 1}
                    dot={false}
                    activeDot={false}
                    isAnimationActive={false}
                  />,
                );
              }
              if (style === "markers" || style === "line") {
                out.push(
                  <Scatter
                    key={`${s.name}-points`}
                    data={d}
                    name={s.label || s.name}
                    fill={s.colour}
                    isAnimationActive={false}
                    shape={(p: { cx?: number; cy?: number }) => (p.cx === undefined || p.cy === undefined ? <g /> : <circle cx={p.cx} cy={p.cy} r={3.5} fill={s.colour} data-series={s.name} />)}
                  />,
                );
              }
              return out;
            })}
          </ComposedChart>
        </ResponsiveContainer>
      </div>
      <figcaption className="flex flex-wrap gap-x-3 gap-y-1 text-xs">
        {described.map((s) => (
          <span key={s.name} className="inline-flex items-center gap-1">
            <LegendIcon s={s} />
            {s.label ?? s.name}
          </span>
        ))}
      </figcaption>
    </figure>
  );
}
