/**
 * The case page's mesh section: the per-interval error estimate over time and, for a refined case,
 * its passes. Wording states what the estimate measures and how far it was checked.
 */
import type { CaseMesh } from "~/models/mesh.server";
import { fmt, fmtSeconds } from "~/components/Caution";
import { MeshErrorChart } from "~/components/charts/MeshErrorChart";

const METHOD_TEXT: Record<string, string> = {
  "residual-quadrature": "the integral of |dx̃/dt − f(x̃, ũ)| over each interval, relative to 1 + the largest |x| or |ẋ| of each state (Betts 2010, §4.7.2)",
  "lgr-integration": "the difference between the state polynomial and the dynamics integrated with one more LGR point, relative to 1 + the largest |x| on the interval (Patterson, Hager and Rao 2015)",
};

export function MeshPanel({ mesh }: { mesh: CaseMesh | null }) {
  const refined = mesh?.tolerance !== null && mesh?.tolerance !== undefined;
  return (
    <section className="space-y-2" aria-labelledby="mesh-title" data-testid="mesh-panel">
      <h2 id="mesh-title" className="text-xl font-semibold">Error estimate per mesh interval</h2>
      {!mesh || !mesh.t || !mesh.error ? (
        <p className="text-muted">No error estimate was stored for this case (the solve did not converge, or it was recorded before estimates were kept).</p>
      ) : (
        <>
          <p className="text-sm text-muted">
            Largest estimate <span className="num text-ink" data-testid="mesh-error-max">{fmt(mesh.max)}</span> over {mesh.error.length} intervals
            {mesh.points !== null ? <> ({mesh.points} mesh points)</> : null}. Each interval's value is {METHOD_TEXT[mesh.method ?? ""] ?? "the stored estimate"}.
            It measures how well the solution obeys the dynamics between mesh points, not the distance to the optimum: a control
            switch that falls inside an interval of a scheme exact for the dynamics is not seen. On smooth library problems it was within a factor
            ½–4 of the true local error (tests/mesh/estimate.test.ts).
          </p>
          <MeshErrorChart t={mesh.t} error={mesh.error} tolerance={mesh.tolerance} />
        </>
      )}
      {refined && mesh ? (
        <div className="space-y-1">
          <h3 className="font-medium">Adaptive refinement to {fmt(mesh.tolerance)}</h3>
          <p className={`text-sm ${mesh.met ? "text-good" : "text-bad"}`} data-testid="mesh-met">{mesh.met ? "Tolerance met on every interval." : "Tolerance not met: refinement stopped before every interval reached it."}</p>
          {mesh.passes ? (
            <table className="text-sm" data-testid="mesh-passes">
              <thead className="text-left text-muted">
                <tr><th scope="col" className="pr-4">pass</th><th scope="col" className="pr-4">intervals</th><th scope="col" className="pr-4">points</th><th scope="col" className="pr-4">status</th><th scope="col" className="pr-4">iterations</th><th scope="col" className="pr-4">time</th><th scope="col">largest estimate</th></tr>
              </thead>
              <tbody>
                {mesh.passes.map((p) => (
                  <tr key={p.pass} className="border-t border-line/50">
                    <td className="num pr-4">{p.pass}</td><td className="num pr-4">{p.intervals}</td><td className="num pr-4">{p.points}</td><td className="pr-4">{p.status}</td>
                    <td className="num pr-4">{p.iterations}</td><td className="num pr-4">{fmtSeconds(p.seconds)}</td><td className="num">{fmt(p.maxEstimate)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          ) : null}
        </div>
      ) : null}
    </section>
  );
}
