/**
 * One metric of one case along the commits of a branch. Each point is a run; regressions are
 * drawn as filled triangles (▲) and improvements as hollow down-triangles (▽), the symbols of
 * app/vocabulary.ts. Hovering shows the commit, clicking a
 * point opens its run. Fixed size, drawn after hydration.
 */
import { niceTicks } from "./ticks";
import { useNavigate } from "react-router";
import { CartesianGrid, Line, LineChart, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";
import type { HistoryPoint } from "~/models/history.server";
import { directionOf, kindLabel, statusLabel } from "~/vocabulary";

interface DotProps {
  cx?: number;
  cy?: number;
  payload?: HistoryPoint & { i: number };
}

function MarkDot({ cx, cy, payload, onOpen }: DotProps & { onOpen: (p: HistoryPoint) => void }) {
  if (cx === undefined || cy === undefined || !payload || payload.value === null) return <g />;
  const open = () => onOpen(payload);
  const common = { onClick: open, style: { cursor: "pointer" }, "data-testid": "history-point", "data-mark": payload.mark ?? "none" } as const;
  if (payload.mark === "regression") return <path d={`M${cx},${cy - 7} L${cx + 6},${cy + 5} L${cx - 6},${cy + 5} Z`} fill="var(--aw-bad)" {...common} />;
  if (payload.mark === "improvement") return <path d={`M${cx},${cy + 7} L${cx + 6},${cy - 5} L${cx - 6},${cy - 5} Z`} fill="var(--aw-surface)" stroke="var(--aw-good)" strokeWidth={2} {...common} />;
  return <circle cx={cx} cy={cy} r={3.5} fill="var(--aw-accent)" {...common} />;
}

function TooltipBody({ active, payload }: { active?: boolean; payload?: { payload: HistoryPoint }[] }) {
  if (!active || !payload?.[0]) return null;
  const p = payload[0].payload;
  return (
    <div className="card max-w-xs p-2 text-xs" data-testid="history-tooltip">
      <p className="num font-semibold">{p.commitHash.slice(0, 10)}{p.isDemo ? " · demo data" : ""}</p>
      <p data-ident>{p.commitSubject}</p>
      <p className="num text-muted">{new Date(p.startedAt).toISOString().slice(0, 16).replace("T", " ")} UTC · {statusLabel("run", p.status)}</p>
      <p className="num">value {p.value === null ? "—" : p.value.toPrecision(4)}</p>
      {p.markKinds.length ? <p className={p.mark === "regression" ? "text-bad" : "text-good"}>{directionOf(p.mark ?? "regression").symbol} {p.markKinds.map(kindLabel).join(", ")}</p> : null}
      <p className="text-muted">click to open the run</p>
    </div>
  );
}

/**
 * Y domain: recharts' rounded "auto" domain, except when every value is the same (one run, or a
 * metric that did not move), where a log or linear scale would collapse to a single point and draw
 * nothing; the domain is then opened around that value (a factor 2 on a log axis).
 */
function yDomain(values: number[], logScale: boolean): [number, number] | ["auto", "auto"] {
  if (values.length === 0) return ["auto", "auto"];
  const lo = Math.min(...values);
  const hi = Math.max(...values);
  if (hi > lo) return ["auto", "auto"];
  if (logScale) return [lo / 2, hi * 2];
  const pad = Math.max(Math.abs(lo) * 0.5, 1e-12);
  return [lo - pad, hi + pad];
}

export function HistoryChart({ points, label, log, width = 900, height = 320 }: { points: HistoryPoint[]; label: string; log: boolean; width?: number; height?: number }) {
  const navigate = useNavigate();
  const data = points.map((p, i) => ({ ...p, i }));
  const positive = data.every((p) => p.value === null || p.value > 0);
  const logScale = log && positive;
  const values = data.flatMap((p) => (p.value !== null && Number.isFinite(p.value) ? [p.value] : []));
  // a linear axis gets round ticks whose labels differ even for a nearly flat series (charts/ticks.ts)
  const linear = !logScale && values.length ? niceTicks(Math.min(...values), Math.max(...values), 5) : null;
  return (
    <figure className="card p-3" data-testid="history-chart">
      <figcaption className="mb-1 text-sm font-medium">{label}</figcaption>
      {/* The chart takes the card's width (up to `width`): measured on the client. */}
      <div style={{ width: "100%", maxWidth: width, height }}>
      <ResponsiveContainer width="100%" height={height}>
      <LineChart data={data} margin={{ top: 10, right: 16, bottom: 10, left: 8 }}>
        <CartesianGrid stroke="var(--aw-line)" strokeDasharray="2 4" />
        <XAxis dataKey="i" type="number" domain={[0, Math.max(1, data.length - 1)]} tickFormatter={(i: number) => data[i]?.commitHash.slice(0, 7) ?? ""} tick={{ fontSize: 10, fill: "var(--aw-muted)" }} />
        <YAxis type="number" scale={logScale ? "log" : "auto"} domain={linear?.domain ?? yDomain(values, logScale)} ticks={linear?.ticks} tick={{ fontSize: 11, fill: "var(--aw-muted)" }} width={72} tickFormatter={linear?.format ?? ((v: number) => v.toPrecision(3))} />
        <Tooltip content={<TooltipBody />} />
        <Line dataKey="value" stroke="var(--aw-accent)" isAnimationActive={false} connectNulls dot={(props: { cx?: number; cy?: number; payload?: unknown; index?: number }) => <MarkDot key={(props.payload as HistoryPoint | undefined)?.runId ?? props.index} cx={props.cx} cy={props.cy} payload={props.payload as DotProps["payload"]} onOpen={(p) => navigate(`/runs/${p.runId}`)} />} activeDot={false} />
      </LineChart>
      </ResponsiveContainer>
      </div>
    </figure>
  );
}
