/**
 * The NLP iteration log of a case as small charts of its measures over the iterations —
 * objective, primal infeasibility, dual infeasibility, barrier parameter μ, step sizes — with the
 * numbers in a table behind a toggle. Restoration iterations are shaded in every chart; what
 * happened in an iteration is written in words (app/engine/nlp/iteration-log.ts). Infeasibilities
 * and μ span decades, so they are drawn on log axes (compare/log-axis.ts); step sizes lie in
 * [0, 1] and are drawn linearly. Series colours: the colour-blind-safe palette of M. Okabe and
 * K. Ito, "Color Universal Design", 2008 (as app/vocabulary.ts SCHEME_PALETTE).
 */
import { useId, useState } from "react";
import { CartesianGrid, Line, LineChart, ReferenceArea, ResponsiveContainer, Tooltip, XAxis, YAxis } from "recharts";
import { eventWords, eventsOfRow } from "~/engine/nlp/iteration-log";
import type { IterationRecord } from "~/engine/nlp/types";
import { logDomain, logTickLabel, logTicks, loggable } from "~/components/compare/log-axis";
import { niceTicks } from "~/components/charts/ticks";

export type LogRow = Record<string, unknown>;

/** One row of the log as drawn: the solver's measures, whether it was a restoration iteration, its events in words. */
type Iter = Pick<IterationRecord, "iter" | "f" | "infPr" | "infDu" | "mu" | "normD" | "deltaW" | "alphaPr" | "alphaDu" | "lsTrials"> & {
  restoration: boolean;
  words: string[];
};

const num = (v: unknown) => (typeof v === "number" ? v : typeof v === "string" && v.trim() !== "" ? Number(v) : NaN);

export function readLog(rows: readonly LogRow[]): Iter[] {
  return rows.map((r, i) => {
    const lsTrials = num(r.lsTrials);
    return {
      iter: Number.isFinite(num(r.iter)) ? num(r.iter) : i,
      f: num(r.f), infPr: num(r.infPr), infDu: num(r.infDu), mu: num(r.mu), normD: num(r.normD), deltaW: num(r.deltaW),
      alphaPr: num(r.alphaPr), alphaDu: num(r.alphaDu), lsTrials: Number.isFinite(lsTrials) ? lsTrials : 0,
      restoration: r.phase === "restoration",
      words: eventWords({ lsTrials: Number.isFinite(lsTrials) ? lsTrials : 0, events: eventsOfRow(r) }),
    };
  });
}

/** Runs of consecutive restoration iterations, as [first, last] iteration numbers. */
function restorationSpans(it: Iter[]): [number, number][] {
  const out: [number, number][] = [];
  for (const r of it) {
    if (!r.restoration) continue;
    const last = out[out.length - 1];
    if (last && last[1] === r.iter - 1) last[1] = r.iter;
    else out.push([r.iter, r.iter]);
  }
  return out;
}

interface SeriesSpec {
  key: keyof Iter;
  label: string;
  colour: string;
  dashed?: boolean;
}

const e3 = (v: number) => (Number.isFinite(v) ? v.toExponential(3) : "—");

function SmallChart({ title, note, it, series, log }: { title: string; note: string; it: Iter[]; series: SeriesSpec[]; log: boolean }) {
  const values = it.flatMap((r) => series.map((s) => r[s.key] as number));
  const logD = log ? logDomain(values) : null;
  const finite = values.filter(Number.isFinite);
  const lin = !log && finite.length ? niceTicks(Math.min(...finite), Math.max(...finite), 4) : null;
  const data = it.map((r) => {
    const p: Record<string, number | null> = { iter: r.iter };
    for (const s of series) {
      const v = r[s.key] as number;
      p[s.key] = log ? (loggable(v) ? Math.log10(v) : null) : Number.isFinite(v) ? v : null;
    }
    return p;
  });
  const ticks = logD ? logTicks(logD) : lin?.ticks;
  const spans = restorationSpans(it);
  return (
    <figure className="card min-w-0 p-3" style={{ flex: "1 1 15rem", maxWidth: 360 }} data-testid="iteration-chart" data-measure={series.map((s) => s.key).join(",")}>
      <figcaption className="mb-1 text-sm font-medium">
        {title} <span className="font-normal text-muted">{note}</span>
      </figcaption>
      <div style={{ width: "100%", height: 150 }}>
        <ResponsiveContainer width="100%" height={150}>
          <LineChart data={data} margin={{ top: 4, right: 8, bottom: 0, left: 0 }}>
            <CartesianGrid stroke="var(--aw-line)" strokeDasharray="2 4" />
            <XAxis dataKey="iter" type="number" domain={["dataMin", "dataMax"]} allowDecimals={false} tick={{ fontSize: 10, fill: "var(--aw-muted)" }} />
            <YAxis
              type="number"
              domain={logD ?? lin?.domain ?? ["auto", "auto"]}
              ticks={ticks}
              allowDataOverflow
              tick={{ fontSize: 10, fill: "var(--aw-muted)" }}
              tickFormatter={(v: number) => (logD ? logTickLabel(v, v === ticks?.[0] || v === ticks?.[ticks.length - 1]) : lin ? lin.format(v) : String(v))}
              width={52}
            />
            {spans.map(([a, b]) => <ReferenceArea key={a} x1={a - 0.5} x2={b + 0.5} fill="var(--aw-warn)" fillOpacity={0.15} ifOverflow="extendDomain" />)}
            <Tooltip
              contentStyle={{ background: "var(--aw-surface)", border: "1px solid var(--aw-line)", fontSize: 12 }}
              labelFormatter={(i) => `iteration ${i}`}
              formatter={(v, name) => [typeof v === "number" ? (log ? e3(10 ** v) : v.toPrecision(6)) : "—", name]}
            />
            {series.map((s) => (
              <Line key={s.key} dataKey={s.key} name={s.label} stroke={s.colour} strokeDasharray={s.dashed ? "5 3" : undefined} strokeWidth={1.75} dot={it.length < 40 ? { r: 1.5 } : false} connectNulls={false} isAnimationActive={false} />
            ))}
          </LineChart>
        </ResponsiveContainer>
      </div>
      {series.length > 1 ? (
        <p className="mt-1 flex flex-wrap gap-3 text-xs text-muted">
          {series.map((s) => (
            <span key={s.key}>
              <svg width="18" height="6" aria-hidden="true"><line x1="0" y1="3" x2="18" y2="3" stroke={s.colour} strokeWidth="2" strokeDasharray={s.dashed ? "5 3" : undefined} /></svg> {s.label}
            </span>
          ))}
        </p>
      ) : null}
    </figure>
  );
}

/** Charts of the measures over iterations; the numbers behind a toggle. */
export function IterationPanel({ rows }: { rows: readonly LogRow[] }) {
  const [table, setTable] = useState(false);
  const tableId = useId();
  const it = readLog(rows);
  const restorations = it.filter((r) => r.restoration).length;
  const cuts = it.reduce((a, r) => a + Math.max(0, r.lsTrials - 1), 0);
  return (
    <div className="space-y-3">
      <p className="text-sm text-muted" data-testid="iteration-summary">
        {Math.max(0, it.length - 1)} iterations after the starting point (row 0){restorations ? `, ${restorations} in the restoration phase (shaded)` : ""}; the line search cut the step {cuts} time{cuts === 1 ? "" : "s"}.
      </p>
      <div className="flex flex-wrap gap-3">
        <SmallChart title="Objective" note="(as the problem states it)" it={it} series={[{ key: "f", label: "objective", colour: "var(--aw-accent)" }]} log={false} />
        <SmallChart title="Primal infeasibility" note="(max constraint violation, log)" it={it} series={[{ key: "infPr", label: "primal", colour: "#0072B2" }]} log />
        <SmallChart title="Dual infeasibility" note="(scaled Lagrangian gradient, log)" it={it} series={[{ key: "infDu", label: "dual", colour: "#D55E00" }]} log />
        <SmallChart title="Barrier parameter μ" note="(log)" it={it} series={[{ key: "mu", label: "μ", colour: "#009E73" }]} log />
        <SmallChart
          title="Step sizes"
          note="(fraction of the full step)"
          it={it}
          series={[
            { key: "alphaPr", label: "α primal", colour: "#CC79A7" },
            { key: "alphaDu", label: "α dual", colour: "#E69F00", dashed: true },
          ]}
          log={false}
        />
      </div>
      <button type="button" className="btn-quiet" aria-expanded={table} aria-controls={tableId} onClick={() => setTable((v) => !v)} data-testid="iteration-table-toggle">
        {table ? "Hide the numbers" : "Show the numbers"}
      </button>
      <div id={tableId} hidden={!table} className="card max-h-[32rem] overflow-auto">
        {table ? (
          <table className="w-full text-xs" data-testid="iteration-log">
            <thead className="sticky top-0 bg-raised text-left">
              <tr>
                <th scope="col" className="px-2 py-1">Iteration</th>
                <th scope="col" className="px-2 py-1">Objective</th>
                <th scope="col" className="px-2 py-1">Primal infeasibility</th>
                <th scope="col" className="px-2 py-1">Dual infeasibility</th>
                <th scope="col" className="px-2 py-1">Barrier μ</th>
                <th scope="col" className="px-2 py-1">Hessian shift δw</th>
                <th scope="col" className="px-2 py-1">Step |Δx|</th>
                <th scope="col" className="px-2 py-1">α primal</th>
                <th scope="col" className="px-2 py-1">α dual</th>
                <th scope="col" className="px-2 py-1">What happened</th>
              </tr>
            </thead>
            <tbody>
              {it.map((r, i) => (
                <tr key={i} className={`border-t border-line/50 ${r.restoration ? "bg-warn/10" : ""}`}>
                  <td className="num px-2 py-0.5 text-right">{r.iter}</td>
                  <td className="num px-2 py-0.5 text-right">{e3(r.f)}</td>
                  <td className="num px-2 py-0.5 text-right">{e3(r.infPr)}</td>
                  <td className="num px-2 py-0.5 text-right">{e3(r.infDu)}</td>
                  <td className="num px-2 py-0.5 text-right">{e3(r.mu)}</td>
                  <td className="num px-2 py-0.5 text-right">{r.deltaW > 0 ? e3(r.deltaW) : "—"}</td>
                  <td className="num px-2 py-0.5 text-right">{e3(r.normD)}</td>
                  <td className="num px-2 py-0.5 text-right">{e3(r.alphaPr)}</td>
                  <td className="num px-2 py-0.5 text-right">{e3(r.alphaDu)}</td>
                  <td className="px-2 py-0.5">{[r.restoration ? "restoration phase" : "", ...r.words].filter(Boolean).join("; ")}</td>
                </tr>
              ))}
            </tbody>
          </table>
        ) : null}
      </div>
    </div>
  );
}
