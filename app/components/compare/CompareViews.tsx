/**
 * Every view of one comparison (one commit): convergence with fitted and theoretical orders,
 * work–precision, performance profiles (time, accuracy) and the cheapest setting per problem.
 */
import { Link } from "react-router";
import type { CompareView, ProfileView } from "~/models/compare.server";
import { SchemeChart, type ChartSeries } from "./SchemeChart";
import { colourOf } from "./scheme-colours";

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
                <th className="pr-4 text-left font-medium">scheme</th>
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

export function CheapestTable({ rows, tol }: { rows: CompareView["cheapest"]; tol: number }) {
  return (
    <table className="w-full text-left text-sm" data-testid="cheapest-table">
      <thead className="text-muted">
        <tr>
          <th className="font-medium">problem</th>
          <th className="font-medium">cheapest scheme</th>
          <th className="font-medium">mesh</th>
          <th className="text-right font-medium">error</th>
          <th className="text-right font-medium">median time</th>
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
              </>
            ) : (
              <td colSpan={4} className="py-1.5 text-muted">
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
    // Fitted line e = Ĉ N^(−p̂) over the meshes measured (convergence-order.ts).
    if (c.fittedOrder !== null && c.fitConstant !== null && nMax > nMin) {
      const line = (n: number) => ({ x: n, y: c.fitConstant! * n ** -c.fittedOrder! });
      conv.push({ name: `${c.scheme}-fit`, label: `fitted order ${c.fittedOrder.toFixed(2)} (${c.scheme})`, colour, style: "fit", points: [line(nMin), line(nMax)] });
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
                <th className="pr-6 text-left font-medium">scheme</th>
                <th className="pr-6 text-right font-medium">fitted order</th>
                <th className="text-right font-medium">theoretical</th>
              </tr>
            </thead>
            <tbody>
              {view.convergence.map((c) => (
                <tr key={c.scheme} data-order-scheme={c.scheme} data-fitted={c.fittedOrder ?? ""}>
                  <td className="pr-6">{c.scheme}</td>
                  <td className="num pr-6 text-right">{c.fittedOrder === null ? "—" : c.fittedOrder.toFixed(2)}</td>
                  <td className="num text-right">{c.theoreticalOrder ?? "spectral"}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className="text-xs text-muted">Fitted order: minus the least-squares slope of log error against log N over the solved meshes (errors below 1e-13, round-off, left out); solid line: that fit, e = Ĉ N^(−p̂); dashed: the theoretical slope from the coarsest point.</p>
        </section>
      ) : (
        <section className="card space-y-2 overflow-x-auto p-4" data-testid="orders-by-problem">
          <h3 className="font-medium">Fitted convergence order per problem ({metricLabel})</h3>
          <table className="text-sm">
            <thead className="text-muted">
              <tr>
                <th className="pr-4 text-left font-medium">problem</th>
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
                  {view.convergence.map((c) => (
                    <td key={c.scheme} className="num pr-4 text-right">
                      {row.orders[c.scheme] == null ? "—" : row.orders[c.scheme]!.toFixed(2)}
                    </td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
          <p className="text-xs text-muted">Low orders on bang–bang or state-constrained problems are expected: the theoretical orders hold for smooth solutions.</p>
        </section>
      )}
      <section className="card space-y-2 p-4" data-testid="work-precision">
        <h3 className="font-medium">Work–precision: {metricLabel} against median solve time</h3>
        <SchemeChart series={wp} title={`Work–precision: ${metricLabel} against median solve time`} xLabel="median solve time (s)" yLabel={metricLabel} logX logY />
      </section>
      <ProfileChart view={view.timeProfile} title="Performance profile: time to meet the tolerance" testId="profile-time" />
      <ProfileChart view={view.accuracyProfile} title="Performance profile: best accuracy" testId="profile-accuracy" />
    </div>
  );
}
