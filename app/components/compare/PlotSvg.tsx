/**
 * A small SVG plot with linear or base-10 logarithmic axes: markers, polylines, step curves and
 * dashed guide lines. Drawn the same on the server and the client (no measuring), so the page
 * shows it before hydration and tests read it without waiting for a chart library.
 */
export const SCHEME_COLOURS: Record<string, string> = {
  euler: "#b3261e",
  trapezoidal: "#1f6feb",
  "hermite-simpson": "#0d7560",
  lgr: "#b4530f",
  "rk4-shooting": "#7a4cc2",
};
export const colourOf = (name: string) => SCHEME_COLOURS[name] ?? "#4d5966";

export interface PlotSeries {
  name: string;
  colour: string;
  points: { x: number; y: number }[];
  /** "markers" (default), "line" (markers joined), "step" (right-continuous step function), "guide" (dashed line, no markers). */
  style?: "markers" | "line" | "step" | "guide";
  /** Shown in the legend; defaults to name. */
  label?: string;
}

function niceLogTicks(lo: number, hi: number): number[] {
  const out: number[] = [];
  for (let e = Math.floor(Math.log10(lo)); e <= Math.ceil(Math.log10(hi)); e++) out.push(10 ** e);
  return out;
}

function niceLinearTicks(lo: number, hi: number, n = 5): number[] {
  const span = hi - lo || 1;
  const step = 10 ** Math.floor(Math.log10(span / n));
  const m = [1, 2, 5, 10].find((k) => span / (k * step) <= n) ?? 10;
  const d = m * step;
  const out: number[] = [];
  for (let v = Math.ceil(lo / d) * d; v <= hi + 1e-12 * span; v += d) out.push(Number(v.toPrecision(12)));
  return out;
}

const fmt = (v: number, log: boolean) => (log ? (Math.abs(Math.log10(v)) < 3 ? String(v) : `1e${Math.round(Math.log10(v))}`) : Number(v.toPrecision(4)).toString());

export function PlotSvg({
  series,
  xLabel,
  yLabel,
  logX = false,
  logY = false,
  width = 460,
  height = 300,
  testId,
  xDomain,
  yDomain,
}: {
  series: PlotSeries[];
  xLabel: string;
  yLabel: string;
  logX?: boolean;
  logY?: boolean;
  width?: number;
  height?: number;
  testId?: string;
  xDomain?: [number, number];
  yDomain?: [number, number];
}) {
  const pad = { l: 58, r: 12, t: 10, b: 40 };
  const usable = (v: number, log: boolean) => Number.isFinite(v) && (!log || v > 0);
  const xs = series.flatMap((s) => s.points.map((p) => p.x)).filter((v) => usable(v, logX));
  const ys = series.flatMap((s) => s.points.map((p) => p.y)).filter((v) => usable(v, logY));
  if (xs.length === 0 || ys.length === 0) {
    return (
      <div className="flex items-center justify-center text-sm text-muted" style={{ width, height }} data-testid={testId} data-empty="true">
        No data to plot.
      </div>
    );
  }
  let [x0, x1] = xDomain ?? [Math.min(...xs), Math.max(...xs)];
  let [y0, y1] = yDomain ?? [Math.min(...ys), Math.max(...ys)];
  if (logX) [x0, x1] = x0 === x1 ? [x0 / 2, x1 * 2] : [x0 / 1.15, x1 * 1.15];
  else if (x0 === x1) [x0, x1] = [x0 - 1, x1 + 1];
  if (logY) [y0, y1] = y0 === y1 ? [y0 / 10, y1 * 10] : [y0 / 2, y1 * 2];
  else if (y0 === y1) [y0, y1] = [y0 - 1, y1 + 1];
  const tx = (v: number) => (logX ? Math.log10(v) : v);
  const ty = (v: number) => (logY ? Math.log10(v) : v);
  const W = width - pad.l - pad.r;
  const H = height - pad.t - pad.b;
  const px = (v: number) => pad.l + ((tx(v) - tx(x0)) / (tx(x1) - tx(x0))) * W;
  const py = (v: number) => pad.t + H - ((ty(v) - ty(y0)) / (ty(y1) - ty(y0))) * H;
  const xt = (logX ? niceLogTicks(x0, x1) : niceLinearTicks(x0, x1)).filter((v) => v >= x0 && v <= x1);
  const yt = (logY ? niceLogTicks(y0, y1) : niceLinearTicks(y0, y1)).filter((v) => v >= y0 && v <= y1);
  const clampY = (v: number) => Math.min(y1, Math.max(y0, v));
  return (
    <figure className="space-y-1" data-testid={testId}>
      <svg width={width} height={height} role="img" aria-label={`${yLabel} against ${xLabel}`} className="overflow-visible">
        <rect x={pad.l} y={pad.t} width={W} height={H} fill="none" stroke="var(--aw-line)" />
        {xt.map((v) => (
          <g key={`x${v}`}>
            <line x1={px(v)} x2={px(v)} y1={pad.t} y2={pad.t + H} stroke="var(--aw-line)" strokeDasharray="2 4" />
            <text x={px(v)} y={pad.t + H + 14} fontSize={10} textAnchor="middle" fill="var(--aw-muted)">
              {fmt(v, logX)}
            </text>
          </g>
        ))}
        {yt.map((v) => (
          <g key={`y${v}`}>
            <line x1={pad.l} x2={pad.l + W} y1={py(v)} y2={py(v)} stroke="var(--aw-line)" strokeDasharray="2 4" />
            <text x={pad.l - 4} y={py(v) + 3} fontSize={10} textAnchor="end" fill="var(--aw-muted)">
              {fmt(v, logY)}
            </text>
          </g>
        ))}
        <text x={pad.l + W / 2} y={height - 6} fontSize={11} textAnchor="middle" fill="var(--aw-ink)">
          {xLabel}
        </text>
        <text x={12} y={pad.t + H / 2} fontSize={11} textAnchor="middle" fill="var(--aw-ink)" transform={`rotate(-90 12 ${pad.t + H / 2})`}>
          {yLabel}
        </text>
        {series.map((s) => {
          const pts = s.points.filter((p) => usable(p.x, logX) && usable(p.y, logY)).sort((a, b) => a.x - b.x);
          const style = s.style ?? "markers";
          let d = "";
          if (style === "step") {
            pts.forEach((p, i) => {
              const x = px(Math.min(x1, Math.max(x0, p.x)));
              const y = py(clampY(p.y));
              if (i === 0) d += `M${x},${y}`;
              else d += `H${x}V${y}`;
            });
            if (pts.length) d += `H${pad.l + W}`;
          } else if (style !== "markers") d = pts.map((p, i) => `${i ? "L" : "M"}${px(p.x)},${py(clampY(p.y))}`).join("");
          return (
            <g key={s.name} data-series={s.name}>
              {d ? <path d={d} fill="none" stroke={s.colour} strokeWidth={style === "guide" ? 1.2 : 1.8} strokeDasharray={style === "guide" ? "6 4" : undefined} /> : null}
              {style === "markers" || style === "line"
                ? pts.map((p, i) => <circle key={i} cx={px(p.x)} cy={py(clampY(p.y))} r={3} fill={s.colour} />)
                : null}
            </g>
          );
        })}
      </svg>
      <figcaption className="flex flex-wrap gap-3 text-xs">
        {series
          .filter((s) => s.label !== "")
          .map((s) => (
            <span key={s.name} className="inline-flex items-center gap-1">
              <svg width={18} height={6}>
                <line x1={0} x2={18} y1={3} y2={3} stroke={s.colour} strokeWidth={2} strokeDasharray={s.style === "guide" ? "4 3" : undefined} />
              </svg>
              {s.label ?? s.name}
            </span>
          ))}
      </figcaption>
    </figure>
  );
}
