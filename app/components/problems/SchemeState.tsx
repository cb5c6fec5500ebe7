/** One scheme's state on main for one problem: solved share and best relative objective error. */
import { Link } from "react-router";
import type { SchemeState } from "~/models/problems.server";

export function formatError(e: number | null | undefined): string {
  if (e === null || e === undefined || !Number.isFinite(e)) return "—";
  return e === 0 ? "0" : e.toExponential(1);
}

export function SchemeStateCell({ state }: { state: SchemeState | undefined }) {
  if (!state) return <span className="whitespace-nowrap text-muted">not run</span>;
  const all = state.solved === state.cases;
  const none = state.solved === 0;
  return (
    <Link to={`/runs/${state.runId}`} className="block whitespace-nowrap text-xs hover:underline" data-scheme-state={all ? "solved" : none ? "failed" : "partial"}>
      <span className={all ? "text-good" : none ? "text-bad" : "text-warn"}>
        {state.solved}/{state.cases} solved
      </span>
      <span className="num block text-muted">err {formatError(state.bestErrorRel)}</span>
    </Link>
  );
}
