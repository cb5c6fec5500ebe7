/**
 * Every view of one comparison (one commit): convergence with fitted and theoretical orders,
 * work–precision, performance profiles (time, accuracy) and the cheapest setting per problem.
 */
import { Link } from "react-router";
import type { CompareQuery, CompareView, ProfileView, TimingSource } from "~/models/compare.server";
import { SchemeChart, type ChartSeries } from "./SchemeChart";
import { colourOf } from "./scheme-colours";
import { METRICS, metricAxisLabel } from "~/vocabulary";

const sci = (v: number | null | undefined, digits = 2) => (v === null || v === undefined || !Number.isFinite(v) ? "—" : v.toExponential(digits));
const ms = (s: number | null | undefined) => (s === null || s === undefined ? "—" : `${(s * 1000).toFixed(s < 0.01 ? 2 : 1)} ms`);

function profileSeries(view: ProfileView): { series: ChartSeries[]; rM: number } | null {
  const p = view.profile;
  if (!p) return null;
  const series = view.schemes.map((s, k) => {
    const c = p.curves[k]!;
    const pts = [{ x: 1, y: 0 }, ...c.tau.map((t, i) => ({ x: t, y: c.rho[i]! }))];
    // ρ(1) may already be above 0: the first breakpoint is at τ = 1 then.
    if (c.tau[0] === 1) pts.shift();
    return { name: s, colour: colourOf(s), points: pts, style: "step" as const, label: `${s} (wins ${Math.round(p.wins[k]! * 100)} %, solves ${Math.round(p.robustness[k]! * 100)} %)` };
  });
  return { series, rM: p.rM };
}

export function ProfileChart({ view, title, testId }: { view: ProfileView; title: string; testId: string }) {
  const ps = profileSeries(view);
  return (
    <section className="card space-y-2 p-4" data-testid={testId}>
      <h3 className="font-medium">{title}</h3>
      {ps ? (
        <>
          <SchemeChart series={ps.series} title={title} xLabel="τ (ratio to the best scheme)" yLabel="ρ(τ) share of problems" logX xDomain={[1, ps.rM]} yDomain={[0, 1]} width={560} height={260} />
          <table className="text-xs" data-profile-table>
            <thead className="text-muted">
              <tr>
                <th className="pr-4 text-left font-medium">Scheme</th>
                <th className="pr-4 text-right font-medium">ρ(1)</th>
                <th className="text-right font-medium">ρ(r_M⁻)</th>
              </tr>
            </thead>
            <tbody>
              {view.schemes.map((s, k) => (
                <tr key={s} data-profile-scheme={s}>
                  <td className="pr-4">{s}</td>
                  <td className="num pr-4 text-right">{view.profile!.wins[k]!.toFixed(2)}</td>
                  <td className="num text-right">{view.profile!.robustness[k]!.toFixed(2)}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className="text-xs text-muted">
            Over {view.problems.length} problem(s); a failure never counts below r_M = {view.profile!.rM.toPrecision(3)} (Dolan &amp; Moré, Math. Programming 91, 2002).
          </p>
        </>
      ) : (
        <p className="text-sm text-muted">No cases.</p>
      )}
    </section>
  );
}

/** Compact label of a timing source: suite and its repeat setting. */
export const sourceLabel = (s: Pick<TimingSource, "suite" | "repeats" | "warmup">) => `${s.suite} (${s.repeats ?? "?"} timed repeats, ${s.warmup ?? "?"} warm-up)`;

function compareHref(q: CompareQuery, suite: string): string {
  const p = new URLSearchParams();
  if (q.problem) p.set("problem", q.problem);
  if (q.a) p.set("a", q.a);
  if (q.b) p.set("b", q.b);
  p.set("metric", q.metric);
  p.set("tol", String(q.tol));
  p.set("suite", suite);
  return `/compare?${p}`;
}

/** The runs of one commit grouped by timing source; the group shown is marked. */
export function SourcesTable({ view, which, query }: { view: CompareView; which: "a" | "b"; query: CompareQuery }) {
  if (!view.commit) return <p className="text-sm text-muted">No runs for this commit.</p>;
  return (
    <div className="overflow-x-auto" data-sources-for={which}>
      <table className="w-full text-left text-sm">
        <caption className="text-left text-xs text-muted">
          Commit <span className="num">{view.commit.slice(0, 10)}</span>
        </caption>
        <thead className="text-muted">
          <tr>
            <th className="font-medium">Suite and repeat setting</th>
            <th className="font-medium">Runs</th>
            <th className="text-right font-medium">Cases shown</th>
            <th className="font-medium" />
          </tr>
        </thead>
        <tbody>
          {view.sources.map((s) => (
            <tr key={s.key} className="border-t border-line" data-source={s.key} data-source-shown={s.key === view.source ? "yes" : "no"}>
              <td className="py-1.5">{sourceLabel(s)}</td>
              <td className="py-1.5">
                {s.runs.map((r, i) => (
                  <span key={r.id}>
                    {i > 0 ? ", " : ""}
                    <Link to={`/runs/${r.id}`} className="num hover:underline">
                      {r.id.slice(0, 8)}
                    </Link>
                    {r.isDemo ? <span className="ml-1 rounded bg-warn/15 px-1 text-xs text-warn">demo</span> : null}
                  </span>
                ))}
              </td>
              <td className="num py-1.5 text-right">{s.cases}</td>
              <td className="py-1.5 text-right">
                {s.key === view.source ? (
                  <span className="font-medium">shown</span>
                ) : s.cases > 0 ? (
                  <Link to={compareHref(query, s.key)} className="underline">
                    show these
                  </Link>
                ) : (
                  <span className="text-muted">none of this selection</span>
                )}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

export function CheapestTable({ rows, tol, points }: { rows: CompareView["cheapest"]; tol: number; points?: CompareView["points"] }) {
  const byCase = new Map((points ?? []).map((p) => [p.caseId, p]));
  return (
    <table className="w-full text-left text-sm" data-testid="cheapest-table">
      <thead className="text-muted">
        <tr>
          <th className="font-medium">Problem</th>
          <th className="font-medium">Cheapest scheme</th>
          <th className="font-medium">Mesh</th>
          <th className="text-right font-medium">Error</th>
          <th className="text-right font-medium">{METRICS.medianSeconds.label}</th>
          {points ? <th className="pl-3 font-medium">Measured in</th> : null}
        </tr>
      </thead>
      <tbody>
        {rows.map((r) => (
          <tr key={r.problemId} className="border-t border-line" data-cheapest={r.problemId} data-cheapest-scheme={r.scheme ?? ""}>
            <td className="py-1.5">{r.problemId}</td>
            {r.scheme ? (
              <>
                <td className="py-1.5">
                  <Link to={`/cases/${r.caseId}`} className="hover:underline">
                    {r.scheme}
                  </Link>
                </td>
                <td className="num py-1.5">
                  {r.intervals}
                  {r.degree ? `×${r.degree}` : ""}
                </td>
                <td className="num py-1.5 text-right">{sci(r.error)}</td>
                <td className="num py-1.5 text-right">{ms(r.seconds)}</td>
                {points ? (
                  <td className="py-1.5 pl-3" data-cheapest-run={byCase.get(r.caseId!)?.runId ?? ""}>
                    {byCase.get(r.caseId!) ? (
                      <>
                        {byCase.get(r.caseId!)!.suite} ·{" "}
                        <Link to={`/runs/${byCase.get(r.caseId!)!.runId}`} className="num hover:underline">
                          run {byCase.get(r.caseId!)!.runId.slice(0, 8)}
                        </Link>
                      </>
                    ) : (
                      "—"
                    )}
                  </td>
                ) : null}
              </>
            ) : (
              <td colSpan={points ? 5 : 4} className="py-1.5 text-muted">
                no case meets {tol.toExponential(0)}
              </td>
            )}
          </tr>
        ))}
      </tbody>
    </table>
  );
}

export function CompareViews({ view, singleProblem, metricLabel }: { view: CompareView; singleProblem: boolean; metricLabel: string }) {
  if (!view.commit) return <p className="text-muted">No runs for this commit.</p>;
  if (view.points.length === 0) return <p className="text-muted">No cases for this selection at {view.commit.slice(0, 10)}.</p>;
  const conv: ChartSeries[] = [];
  for (const c of view.convergence) {
    const colour = colourOf(c.scheme);
    conv.push({ name: c.scheme, colour, points: c.points.map((p) => ({ x: p.intervals, y: p.error })), style: "markers" });
    const ns = c.points.map((p) => p.intervals);
    const nMin = Math.min(...ns);
    const nMax = Math.max(...ns);
    // Fitted line e = Ĉ N^(−p̂) over the meshes of the fit (convergence-verdict.ts: from the
    // first mesh of the falling tail when the coarser meshes are pre-asymptotic).
    const fitFrom = c.verdict?.fromIntervals ?? nMin;
    if (c.fittedOrder !== null && c.fitConstant !== null && nMax > fitFrom) {
      const line = (n: number) => ({ x: n, y: c.fitConstant! * n ** -c.fittedOrder! });
      const from = c.verdict?.kind === "pre-asymptotic" ? `, from N = ${fitFrom}` : "";
      conv.push({ name: `${c.scheme}-fit`, label: `fitted order ${c.fittedOrder.toFixed(2)} (${c.scheme}${from})`, colour, style: "fit", points: [line(fitFrom), line(nMax)] });
    }
    const first = [...c.points].sort((a, b) => a.intervals - b.intervals)[0];
    if (c.theoreticalOrder && first && nMax > nMin) {
      const p = c.theoreticalOrder;
      conv.push({ name: `${c.scheme}-theory`, label: `slope −${p} (${c.scheme})`, colour, style: "guide", points: [{ x: first.intervals, y: first.error }, { x: nMax, y: first.error * (nMax / first.intervals) ** -p }] });
    }
  }
  const wp: ChartSeries[] = view.convergence.map((c) => ({
    name: c.scheme,
    colour: colourOf(c.scheme),
    style: singleProblem ? "line" : "markers",
    points: view.points.filter((p) => p.scheme === c.scheme && p.solved && p.error !== null && p.seconds !== null).map((p) => ({ x: p.seconds!, y: p.error! })),
  }));
  return (
    <div className="space-y-4">
      {singleProblem ? (
        <section className="card space-y-2 p-4" data-testid="convergence">
          <h3 className="font-medium">Convergence: {metricLabel} against intervals</h3>
          <SchemeChart series={conv} title={`Convergence: ${metricLabel} against mesh intervals`} xLabel="mesh intervals N" yLabel={metricLabel} logX logY />
          <table className="text-sm" data-testid="orders">
            <thead className="text-muted">
              <tr>
                <th className="pr-6 text-left font-medium">Scheme</th>
                <th className="pr-6 text-right font-medium">Fitted order</th>
                <th className="text-right font-medium">Theoretical order</th>
              </tr>
            </thead>
            <tbody>
              {view.convergence.map((c) => (
                <tr key={c.scheme} data-order-scheme={c.scheme} data-fitted={c.fittedOrder ?? ""} data-verdict={c.verdict?.kind ?? ""}>
                  <td className="pr-6">{c.scheme}</td>
                  <td className="num pr-6 text-right">
                    {c.fittedOrder !== null ? c.fittedOrder.toFixed(2) : new Set(c.points.map((p) => p.intervals)).size < 2 ? <span className="text-muted">one mesh</span> : "—"}
                    {c.verdict?.note && c.verdict.kind !== "too-few" ? (
                      <span className={`block max-w-md text-left text-xs ${c.verdict.kind === "not-monotone" ? "text-warn" : "text-muted"}`} data-verdict-note>
                        {c.verdict.note}
                      </span>
                    ) : null}
                  </td>
                  <td className="num text-right">{c.theoreticalOrder ?? "spectral"}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className="text-xs text-muted">Fitted order: minus the least-squares slope of log error against log N over the solved meshes (errors below 1e-13, round-off, left out); solid line: that fit, e = Ĉ N^(−p̂); dashed: the theoretical slope from the coarsest point. Where the error does not fall between the coarsest meshes, those are named pre-asymptotic and the fit starts after them; where the finest mesh's error does not fall, no order is given. Solver share: the solver's duality gap ÷ the error; the gap bounds the solver's part from above, so below 0.1 the error is the discretisation's doing, and above it the solver is possible, not proven.</p>
        </section>
      ) : (
        <section className="card space-y-2 overflow-x-auto p-4" data-testid="orders-by-problem">
          <h3 className="font-medium">Fitted convergence order per problem ({metricLabel})</h3>
          <table className="text-sm">
            <thead className="text-muted">
              <tr>
                <th className="pr-4 text-left font-medium">Problem</th>
                {view.convergence.map((c) => (
                  <th key={c.scheme} className="pr-4 text-right font-medium">
                    {c.scheme}
                    <span className="block text-xs font-normal">theory {c.theoreticalOrder ?? "spectral"}</span>
                  </th>
                ))}
              </tr>
            </thead>
            <tbody>
              {view.ordersByProblem.map((row) => (
                <tr key={row.problemId} className="border-t border-line">
                  <td className="pr-4">
                    <Link to={`/compare?problem=${encodeURIComponent(row.problemId)}${view.commit ? `&a=${view.commit}` : ""}`} className="hover:underline">
                      {row.problemId}
                    </Link>
                  </td>
                  {view.convergence.map((c) => {
                    const v = row.verdicts[c.scheme];
                    const shown = v?.kind === "not-monotone" ? "not monotone" : v?.kind === "at-floor" ? "at floor" : row.orders[c.scheme] == null ? "—" : row.orders[c.scheme]!.toFixed(2);
                    return (
                      <td key={c.scheme} className={`num pr-4 text-right ${v?.kind === "not-monotone" ? "text-warn" : ""}`} data-verdict={v?.kind ?? ""} title={v?.note || undefined}>
                        {shown}
                        {v?.kind === "pre-asymptotic" ? <span className="block text-xs text-muted">from N = {v.fromIntervals}</span> : null}
                        {v?.kind === "not-monotone" && v.cause ? <span className="block text-xs text-muted">{v.cause === "solver" ? "solver possible" : v.cause}</span> : null}
                      </td>
                    );
                  })}
                </tr>
              ))}
            </tbody>
          </table>
          <p className="text-xs text-muted">Low orders on bang–bang or state-constrained problems are expected: the theoretical orders hold for smooth solutions. &ldquo;from N = …&rdquo;: the coarser meshes are pre-asymptotic (the error did not fall there) and the order is fitted from that mesh on; &ldquo;not monotone&rdquo;: the finest mesh&rsquo;s error did not fall, no order, with its cause (discretisation, or solver possible when the solver&rsquo;s duality gap is 0.1 of the error or more: the gap is an upper bound); &ldquo;at floor&rdquo;: every error ≤ 1e-10. Hover a cell for the full note.</p>
        </section>
      )}
      <details className="card p-4" data-testid="points-table">
        <summary className="cursor-pointer font-medium">Every point: its run and suite ({view.points.length})</summary>
        <div className="mt-2 max-h-96 overflow-auto">
          <table className="w-full text-left text-xs">
            <thead className="text-muted">
              <tr>
                <th className="font-medium">Problem</th>
                <th className="font-medium">Scheme</th>
                <th className="font-medium">Mesh</th>
                <th className="text-right font-medium">Error</th>
                <th className="text-right font-medium">{METRICS.medianSeconds.label}</th>
                <th className="pl-3 font-medium">Suite</th>
                <th className="font-medium">Run</th>
              </tr>
            </thead>
            <tbody>
              {view.points.map((p) => (
                <tr key={p.caseId} className="border-t border-line" data-point-case={p.caseId}>
                  <td>{p.problemId}</td>
                  <td>{p.scheme}</td>
                  <td className="num">
                    {p.intervals}
                    {p.degree ? `×${p.degree}` : ""}
                  </td>
                  <td className="num text-right">{p.solved ? sci(p.error) : "not solved"}</td>
                  <td className="num text-right">{ms(p.seconds)}</td>
                  <td className="pl-3">{p.suite}</td>
                  <td>
                    <Link to={`/cases/${p.caseId}`} className="num hover:underline">
                      {p.runId.slice(0, 8)}
                    </Link>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </details>
      <section className="card space-y-2 p-4" data-testid="work-precision">
        <h3 className="font-medium">Work–precision: {metricLabel} against {METRICS.medianSeconds.label.toLowerCase()}</h3>
        <SchemeChart series={wp} title={`Work–precision: ${metricLabel} against ${METRICS.medianSeconds.label.toLowerCase()}`} xLabel={metricAxisLabel("medianSeconds")} yLabel={metricLabel} logX logY />
      </section>
      <ProfileChart view={view.timeProfile} title="Performance profile: time to meet the tolerance" testId="profile-time" />
      <ProfileChart view={view.accuracyProfile} title="Performance profile: best accuracy" testId="profile-accuracy" />
    </div>
  );
}
