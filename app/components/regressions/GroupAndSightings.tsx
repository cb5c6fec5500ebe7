/**
 * Two small panels of a regression page: the member cases of a group finding (a scheme, a problem
 * or the suite judged from all its cases together), and the commits the regression was seen on.
 * Presentation only: the rows come from the loader.
 */
import { Link } from "react-router";

export interface MemberRow {
  caseKey: string;
  problemId: string;
  ratio: number | null;
}

export interface SightingRow {
  runId: string;
  commitHash: string;
  commitSubject: string | null;
  ratio: number | null;
  ciLow: number | null;
  ciHigh: number | null;
}

const times = (r: number | null) => (r === null ? "—" : `×${r.toFixed(2)}`);

export function MemberCases({ members }: { members: MemberRow[] }) {
  if (members.length === 0) return null;
  return (
    <section className="card overflow-x-auto p-4" data-testid="members">
      <h2 className="mb-2 text-lg font-semibold">Cases in this group ({members.length})</h2>
      <p className="mb-2 text-sm text-muted">The interval above pools all of them (two-stage bootstrap over cases and their timing samples); each case&apos;s own median ratio is listed here.</p>
      <table className="text-sm">
        <thead>
          <tr>
            <th className="pr-4 text-left">case</th>
            <th className="text-right">median ratio</th>
          </tr>
        </thead>
        <tbody>
          {members.map((m) => (
            <tr key={m.caseKey}>
              <td className="num pr-4">
                <Link to={`/problems/${m.problemId}`} className="hover:underline">
                  {m.caseKey}
                </Link>
              </td>
              <td className="num text-right">{times(m.ratio)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </section>
  );
}

export function Sightings({ sightings }: { sightings: SightingRow[] }) {
  if (sightings.length < 2) return null;
  return (
    <section className="card p-4" data-testid="sightings">
      <h2 className="mb-2 text-lg font-semibold">Seen on {sightings.length} commits</h2>
      <p className="mb-2 text-sm text-muted">One regression: later commits of the branch that showed the same change were added here instead of opening a new one, and its triage applies to all of them.</p>
      <ul className="space-y-1 text-sm">
        {sightings.map((s) => (
          <li key={s.runId}>
            <Link to={`/runs/${s.runId}`} className="num hover:underline">
              {s.commitHash.slice(0, 10)}
            </Link>{" "}
            <span data-ident>{s.commitSubject ?? ""}</span> <span className="num text-muted">{times(s.ratio)}{s.ciLow !== null && s.ciHigh !== null ? ` [${s.ciLow.toFixed(2)}, ${s.ciHigh.toFixed(2)}]` : ""}</span>
          </li>
        ))}
      </ul>
    </section>
  );
}
