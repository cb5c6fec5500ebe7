/**
 * Compare page: cost to reach a tolerance ε with adaptive refinement, per scheme (beside the
 * uniform-mesh work–precision diagram). One row per scheme and tolerance of the refined cases.
 */
import type { RefinementCostRow } from "~/models/refinement-cost.server";
import { fmt, fmtSeconds } from "~/components/Caution";

export function RefinementCostPanel({ rows, commit }: { rows: RefinementCostRow[]; commit: string | null }) {
  return (
    <section className="card space-y-2 p-4" aria-labelledby="refinement-cost-title" data-testid="refinement-cost">
      <h2 id="refinement-cost-title" className="text-lg font-semibold">
        Cost to reach tolerance ε with refinement{commit ? <> at <span className="num">{commit.slice(0, 10)}</span></> : null}
      </h2>
      {rows.length === 0 ? (
        <p className="text-sm text-muted">No refined cases in these runs. A suite asks for them with a mesh such as {"{ \"intervals\": 10, \"tolerances\": [1e-6] }"}.</p>
      ) : (
        <>
          <p className="text-sm text-muted">
            ε bounds every interval's estimated relative error (Betts 2010 §4.7 for local schemes, Patterson–Hager–Rao 2015 for LGR). Time is the
            median solve time of the whole refinement, all passes; the medians are over the cases that met ε.
          </p>
          <table className="w-full text-sm">
            <thead className="text-left text-muted">
              <tr>
                <th scope="col">ε</th><th scope="col">scheme</th><th scope="col" className="text-right">met</th><th scope="col" className="text-right">time</th>
                <th scope="col" className="text-right">mesh points</th><th scope="col" className="text-right">passes</th><th scope="col" className="text-right">iterations</th>
              </tr>
            </thead>
            <tbody>
              {rows.map((r) => (
                <tr key={`${r.scheme}-${r.tolerance}`} className="border-t border-line/50">
                  <td className="num">{fmt(r.tolerance, 1)}</td>
                  <td>{r.scheme}</td>
                  <td className={`num text-right ${r.met < r.cases ? "text-bad" : ""}`}>{r.met} of {r.cases}</td>
                  <td className="num text-right">{fmtSeconds(r.medianSeconds)}</td>
                  <td className="num text-right">{r.medianPoints === null ? "—" : Math.round(r.medianPoints)}</td>
                  <td className="num text-right">{r.medianPasses === null ? "—" : r.medianPasses}</td>
                  <td className="num text-right">{r.medianIterations === null ? "—" : Math.round(r.medianIterations)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </>
      )}
    </section>
  );
}
