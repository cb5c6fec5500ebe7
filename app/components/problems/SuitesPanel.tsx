/**
 * Problem page: which suites run the problem and why (by id, by tag, every problem, added here),
 * the form to add it to a suite (engineers), and "Run it now" with its job's progress and cases.
 */
import { Form, Link, useNavigation } from "react-router";
import { fmtDate, fmtSeconds } from "~/components/Caution";
import { FormError } from "~/components/Field";
import { formatError } from "~/components/problems/SchemeState";
import type { ProblemCheck } from "~/models/problem-checks.server";
import type { ProblemSuiteView } from "~/models/suite-changes.server";
import type { SuiteChange } from "~/runs/suite-changes";
import { DIRECTION, METRICS, schemeLabel, statusLabel, statusTone } from "~/vocabulary";

function why(s: ProblemSuiteView): string {
  const m = s.membership;
  if (s.error) return `the suite file does not load: ${s.error}`;
  switch (m.via) {
    case "id":
      return "listed by id in the suite file";
    case "tag":
      return `selects the tag “${m.tag}”`;
    case "all":
      return "selects every problem of the library";
    case "change":
      return `added here by ${m.change?.by ?? "?"} on ${fmtDate(m.change?.at)} (version ${m.change?.version})`;
    case "excluded":
      return "left out by the suite file's exclude list";
    case "removed":
      return `removed here by ${m.change?.by ?? "?"} on ${fmtDate(m.change?.at)} (version ${m.change?.version})`;
    default:
      return "selects neither its id nor one of its tags";
  }
}

export function SuitesPanel({ suites, history, canChange, error }: { suites: ProblemSuiteView[]; history: (SuiteChange & { suiteName: string })[]; canChange: boolean; error?: string }) {
  const busy = useNavigation().state === "submitting";
  const candidates = suites.filter((s) => !s.membership.included && !s.error);
  return (
    <section className="card space-y-3 p-5" aria-labelledby="suites-title" data-testid="problem-suites">
      <h2 id="suites-title" className="text-lg font-semibold">Suites</h2>
      <p className="text-sm text-muted">A suite resolves its problems when a run starts: a problem it selects by id, by tag or as one of every problem runs from the suite's next run on.</p>
      <ul className="space-y-1 text-sm">
        {suites.map((s) => (
          <li key={s.name} data-suite={s.name} data-included={s.membership.included ? "yes" : "no"} data-via={s.membership.via}>
            <strong className={s.membership.included ? "text-good" : "text-muted"}>{s.membership.included ? "Runs it" : "Does not run it"}</strong>: suite <span className="num">{s.name}</span> — {why(s)}
            {s.version ? <span className="text-muted"> · suite changed here {s.version} time(s)</span> : null}
          </li>
        ))}
        {suites.length === 0 ? <li className="text-muted">This checkout has no suite files (bench/suites/).</li> : null}
      </ul>
      {canChange ? (
        candidates.length ? (
          <Form method="post" className="flex flex-wrap items-end gap-2" aria-label="Add to a suite">
            <input type="hidden" name="intent" value="add-to-suite" />
            <label className="space-y-1 text-sm">
              <span className="font-medium">Suite</span>
              <select name="suite" className="input" data-testid="add-suite-picker">
                {candidates.map((s) => <option key={s.name} value={s.name}>{s.name}</option>)}
              </select>
            </label>
            <label className="space-y-1 text-sm">
              <span className="font-medium">Note (optional)</span>
              <input name="note" className="input" maxLength={500} placeholder="why it belongs there" />
            </label>
            <button type="submit" className="btn" disabled={busy} data-testid="add-to-suite">Add to the suite</button>
          </Form>
        ) : (
          <p className="text-sm text-muted">Every suite runs it.</p>
        )
      ) : (
        <p className="text-sm text-muted">Changing a suite needs the engineer role.</p>
      )}
      {canChange && suites.some((s) => s.membership.via === "change") ? (
        <div className="flex flex-wrap gap-2">
          {suites.filter((s) => s.membership.via === "change").map((s) => (
            <Form method="post" key={s.name}>
              <input type="hidden" name="intent" value="remove-from-suite" />
              <input type="hidden" name="suite" value={s.name} />
              <button type="submit" className="btn-quiet text-sm" disabled={busy} data-testid={`remove-from-${s.name}`}>Take it out of {s.name} again</button>
            </Form>
          ))}
        </div>
      ) : null}
      <FormError message={error} />
      {history.length ? (
        <details className="text-sm">
          <summary className="cursor-pointer">Suite changes for this problem ({history.length})</summary>
          <ul className="mt-1 space-y-0.5" data-testid="suite-history">
            {history.map((h) => (
              <li key={`${h.suiteName}-${h.version}`}>
                {fmtDate(h.at)} · {h.by} {h.action === "add" ? "added it to" : "took it out of"} <span className="num">{h.suiteName}</span> (version {h.version}){h.note ? `: ${h.note}` : ""}
              </li>
            ))}
          </ul>
        </details>
      ) : null}
    </section>
  );
}

const ACTIVE = new Set(["queued", "running"]);

export function ProblemCheckPanel({ check, canRun, meshes }: { check: ProblemCheck | null; canRun: boolean; meshes: string }) {
  const busy = useNavigation().state === "submitting";
  const job = check?.job ?? null;
  const active = job ? ACTIVE.has(job.status) : false;
  const p = job?.progress ?? null;
  const pct = p && p.total ? Math.round((100 * p.done) / p.total) : 0;
  return (
    <section className="card space-y-3 p-5" aria-labelledby="check-title" data-testid="problem-check" data-status={job?.status ?? "none"}>
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h2 id="check-title" className="text-lg font-semibold">Run it now</h2>
        {canRun ? (
          <Form method="post">
            <input type="hidden" name="intent" value="run-now" />
            <button type="submit" className="btn" disabled={busy || active} data-testid="run-now">{active ? "Running…" : "Run it now"}</button>
          </Form>
        ) : null}
      </div>
      <p className="text-sm text-muted">Every scheme on two coarse meshes ({meshes}), three timed solves each, at the repository's current commit; one run at a time on this machine, so it may wait for a suite run to end.</p>
      {job ? (
        <div className="space-y-2">
          <p className="text-sm">
            <Link className="text-accent hover:underline" to={`/run-suite?job=${job.id}`}>Job {job.id}</Link> at <code className="num">{job.commit?.slice(0, 10)}</code>:{" "}
            <span className={`font-semibold ${statusTone("job", job.status)}`} data-testid="check-status" aria-live="polite">{statusLabel("job", job.status)}</span>
            {job.status === "queued" ? " (waiting for the machine)" : ""}
          </p>
          {active || p ? (
            <div className="space-y-1">
              <div className="h-3 w-full overflow-hidden rounded bg-raised" role="progressbar" aria-valuemin={0} aria-valuemax={p?.total ?? 0} aria-valuenow={p?.done ?? 0} aria-label="Cases done">
                <div className="h-full bg-accent transition-all" style={{ width: `${pct}%` }} />
              </div>
              <p className="num text-sm text-muted" data-testid="check-progress">
                {p?.done ?? 0}/{p?.total ?? "?"} cases{p?.current && active ? ` · now ${p.current}` : ""}{p ? ` · elapsed ${fmtSeconds(p.elapsedSeconds)}` : ""}
              </p>
            </div>
          ) : null}
          {job.error ? <p className="text-sm text-bad">{job.error}</p> : null}
          {job.found ? (
            <p className="text-sm" data-testid="check-found">
              Solved <strong className="num">{job.found.solved}</strong> of <span className="num">{job.found.cases}</span> cases; {DIRECTION.regression.symbol} {job.found.regressions} {DIRECTION.regression.label}(s), {DIRECTION.improvement.symbol} {job.found.improvements} {DIRECTION.improvement.label}(s) against the problem's previous run.
              {job.runId ? <> <Link className="text-accent hover:underline" to={`/runs/${job.runId}`}>Open the run</Link>.</> : null}
            </p>
          ) : null}
          {check && check.cases.length ? (
            <div className="overflow-x-auto">
              <table className="w-full text-left text-sm" data-testid="check-cases">
                <thead className="text-muted">
                  <tr>
                    <th className="pr-4 font-medium">Scheme</th>
                    <th className="pr-4 font-medium">Mesh</th>
                    <th className="pr-4 font-medium">{METRICS.status.label}</th>
                    <th className="pr-4 text-right font-medium">{METRICS.objectiveErrorRel.label}</th>
                    <th className="pr-4 text-right font-medium">{METRICS.stateError.label}</th>
                    <th className="pr-4 text-right font-medium">{METRICS.iterations.label}</th>
                    <th className="text-right font-medium">{METRICS.medianSeconds.label}</th>
                  </tr>
                </thead>
                <tbody>
                  {check.cases.map((c) => (
                    <tr key={c.id} className="border-t border-line" data-case={c.caseKey}>
                      <td className="py-1.5 pr-4"><Link className="hover:underline" to={`/cases/${c.id}`}>{schemeLabel(c.scheme)}</Link></td>
                      <td className="num pr-4">{c.intervals}{c.degree ? `×${c.degree}` : ""}</td>
                      <td className={`pr-4 ${statusTone("case", c.status)}`}>{statusLabel("case", c.status)}</td>
                      <td className="num pr-4 text-right">{formatError(c.objectiveErrorRel)}</td>
                      <td className="num pr-4 text-right">{formatError(c.stateError)}</td>
                      <td className="num pr-4 text-right">{c.iterations ?? "—"}</td>
                      <td className="num text-right">{c.medianSeconds != null ? `${(c.medianSeconds * 1000).toFixed(1)} ms` : "—"}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          ) : job.runId || active ? <p className="text-sm text-muted">No case finished yet.</p> : null}
        </div>
      ) : (
        <p className="text-sm text-muted">Not run from this page yet.</p>
      )}
    </section>
  );
}
