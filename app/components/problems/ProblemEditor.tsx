/**
 * The add / edit form of a reference problem: upload (problem.json + optional reference.csv,
 * also editable as text) or a builder form. Every error is shown at its field and what was typed
 * stays. "Trial solve" posts the same form to /api/problems/trial through a fetcher and draws
 * the trajectory over the reference; "Save" posts to the page's action.
 */
import { useEffect, useRef, useState, type ReactNode, type TextareaHTMLAttributes } from "react";
import { Form, useActionData, useFetcher, useNavigation } from "react-router";
import { TrajectoryChart } from "~/components/charts/TrajectoryChart";
import { FormError } from "~/components/Field";
import type { TrialResult } from "~/models/problems.server";

type Values = Record<string, string>;
type Errors = Record<string, string | undefined>;

function FieldError({ name, error }: { name: string; error?: string }) {
  if (!error) return null;
  return (
    <p id={`field-${name}-error`} className="whitespace-pre-line text-sm text-bad" data-field-error={name}>
      {error}
    </p>
  );
}

function Area({ label, name, error, hint, ...rest }: { label: ReactNode; name: string; error?: string; hint?: ReactNode } & TextareaHTMLAttributes<HTMLTextAreaElement>) {
  return (
    <div className="space-y-1">
      <label htmlFor={`field-${name}`} className="block text-sm font-medium">
        {label}
      </label>
      <textarea id={`field-${name}`} name={name} className="input num min-h-24 text-xs" aria-invalid={error ? true : undefined} aria-describedby={error ? `field-${name}-error` : undefined} spellCheck={false} {...rest} />
      {error ? <FieldError name={name} error={error} /> : hint ? <p className="text-xs text-muted">{hint}</p> : null}
    </div>
  );
}

function Input({ label, name, error, value, ...rest }: { label: ReactNode; name: string; error?: string; value?: string } & React.InputHTMLAttributes<HTMLInputElement>) {
  return (
    <div className="space-y-1">
      <label htmlFor={`field-${name}`} className="block text-sm font-medium">
        {label}
      </label>
      <input id={`field-${name}`} name={name} defaultValue={value} className="input" aria-invalid={error ? true : undefined} {...rest} />
      <FieldError name={name} error={error} />
    </div>
  );
}

const SCHEMES = ["hermite-simpson", "trapezoidal", "lgr", "euler", "rk4-shooting"];

export function ProblemEditor({ values, errors, idLocked, saveLabel }: { values: Values; errors: Errors; idLocked?: boolean; saveLabel: string }) {
  const [mode, setMode] = useState(values.mode === "form" ? "form" : "upload");
  const trial = useFetcher<{ errors?: Errors; values?: Values; trial?: TrialResult; error?: string }>();
  const formRef = useRef<HTMLFormElement>(null);
  const saving = useNavigation().state === "submitting";
  // The newest answer's errors win: a trial's (none when it solved) once it answered after the last
  // save, the save's otherwise. Reading the fetcher's state instead showed a stale save error while
  // the fetcher revalidated ("loading") after a successful trial.
  const [latest, setLatest] = useState<"save" | "trial">("save");
  // Each save answer is a new action-data object (the `errors` prop is a fresh `{}` on every render
  // when there is none, so it cannot mark a new answer).
  const saveAnswer = useActionData();
  useEffect(() => setLatest("save"), [saveAnswer]);
  useEffect(() => {
    if (trial.data) setLatest("trial");
  }, [trial.data]);
  const shownErrors: Errors = latest === "trial" && trial.data ? (trial.data.errors ?? {}) : errors;
  const v = (k: string) => values[k] ?? "";
  const e = (k: string) => shownErrors[k];
  const t = trial.data?.trial;
  // The text areas show uploaded files' text once the server has read them (save or trial).
  const [problemJson, setProblemJson] = useState(v("problemJson"));
  const [referenceCsv, setReferenceCsv] = useState(v("referenceCsv"));
  useEffect(() => {
    setProblemJson(values.problemJson ?? "");
    setReferenceCsv(values.referenceCsv ?? "");
  }, [values]);
  const trialValues = trial.data?.values;
  useEffect(() => {
    if (trialValues?.mode === "upload") {
      setProblemJson(trialValues.problemJson ?? "");
      setReferenceCsv(trialValues.referenceCsv ?? "");
    }
  }, [trialValues]);
  const runTrial = () => {
    if (formRef.current) trial.submit(formRef.current, { method: "post", action: "/api/problems/trial", encType: "multipart/form-data" });
  };
  return (
    <Form method="post" encType="multipart/form-data" ref={formRef} className="space-y-6" data-testid="problem-editor">
      <input type="hidden" name="mode" value={mode} />
      <div className="flex gap-2" role="tablist">
        <button type="button" role="tab" aria-selected={mode === "upload"} className={mode === "upload" ? "btn" : "btn-quiet"} onClick={() => setMode("upload")}>
          Upload files
        </button>
        <button type="button" role="tab" aria-selected={mode === "form"} className={mode === "form" ? "btn" : "btn-quiet"} onClick={() => setMode("form")} disabled={idLocked}>
          Build with a form
        </button>
      </div>
      <FormError message={e("form")} />
      <Input label="Id (folder name)" name="id" value={v("id")} error={e("id")} readOnly={idLocked} placeholder="e.g. plover-glider-descent" />
      {mode === "upload" ? (
        <section className="space-y-4">
          <div className="grid gap-4 md:grid-cols-2">
            <div className="space-y-1">
              <label htmlFor="field-problemFile" className="block text-sm font-medium">
                problem.json (≤ 512 KiB)
              </label>
              <input id="field-problemFile" type="file" name="problemFile" accept=".json,application/json" className="text-sm" />
            </div>
            <div className="space-y-1">
              <label htmlFor="field-referenceFile" className="block text-sm font-medium">
                reference.csv, optional (≤ 4 MiB)
              </label>
              <input id="field-referenceFile" type="file" name="referenceFile" accept=".csv,text/csv" className="text-sm" />
            </div>
          </div>
          <Area label="problem.json text (a chosen file replaces it)" name="problemJson" value={problemJson} onChange={(ev) => setProblemJson(ev.target.value)} error={e("problemJson")} rows={16} />
          <Area label="reference.csv text" name="referenceCsv" value={referenceCsv} onChange={(ev) => setReferenceCsv(ev.target.value)} error={e("referenceCsv")} rows={4} hint="Header t,<states>[,<controls>], one row per time." />
        </section>
      ) : (
        <section className="grid gap-4 md:grid-cols-2">
          <Input label="Title" name="title" value={v("title")} error={e("title")} />
          <Input label="Tags (comma separated)" name="tags" value={v("tags")} error={e("tags")} placeholder="smooth, fixed-final-time" />
          <div className="md:col-span-2">
            <Area label="Description" name="description" defaultValue={v("description")} error={e("description")} rows={2} />
          </div>
          <Area label="Constants" name="constants" defaultValue={v("constants")} error={e("constants")} hint="name = value ; unit" placeholder={"k = 2 ; 1/s"} />
          <Area label="States" name="states" defaultValue={v("states")} error={e("states")} hint="name, unit, lower, upper, initial, final (empty = none / free)" placeholder={"x, m, , , 0, 1\nv, m/s, , , 0, 0"} />
          <Area label="Controls" name="controls" defaultValue={v("controls")} error={e("controls")} hint="name, unit, lower, upper" placeholder="u, m/s^2, -1, 1" />
          <Area label="Dynamics" name="dynamics" defaultValue={v("dynamics")} error={e("dynamics")} hint="x' = expression, one per state" placeholder={"x' = v\nv' = u"} />
          <Area label="Path constraints" name="path" defaultValue={v("path")} error={e("path")} hint="name | expression | lower | upper" />
          <div className="grid grid-cols-2 gap-3">
            <Input label="Initial time t₀" name="t0" value={v("t0") || "0"} error={e("t0")} />
            <div className="space-y-1">
              <label htmlFor="field-tfKind" className="block text-sm font-medium">
                Final time
              </label>
              <select id="field-tfKind" name="tfKind" defaultValue={v("tfKind") || "fixed"} className="input">
                <option value="fixed">fixed</option>
                <option value="free">free</option>
              </select>
            </div>
            <Input label="t_f (fixed)" name="tf" value={v("tf")} error={e("tf")} />
            <Input label="t_f guess (free)" name="tfGuess" value={v("tfGuess")} error={e("tfGuess")} />
            <Input label="t_f lower (free)" name="tfLower" value={v("tfLower")} error={e("tfLower")} />
            <Input label="t_f upper (free)" name="tfUpper" value={v("tfUpper")} error={e("tfUpper")} />
          </div>
          <div className="space-y-3">
            <div className="space-y-1">
              <label htmlFor="field-sense" className="block text-sm font-medium">
                Objective sense
              </label>
              <select id="field-sense" name="sense" defaultValue={v("sense") || "min"} className="input">
                <option value="min">minimise</option>
                <option value="max">maximise</option>
              </select>
            </div>
            <Input label="Terminal cost (endpoint expression)" name="terminal" value={v("terminal")} error={e("terminal")} placeholder="tf" />
            <Input label="Running cost (integrand)" name="running" value={v("running")} error={e("running")} placeholder="u^2/2" />
          </div>
          <div className="space-y-3">
            <Input label="Reference objective value" name="refObjective" value={v("refObjective")} error={e("refObjective")} />
            <Input label="Its absolute tolerance" name="refTolerance" value={v("refTolerance")} error={e("refTolerance")} />
            <div className="space-y-1">
              <label htmlFor="field-refKind" className="block text-sm font-medium">
                Provenance
              </label>
              <select id="field-refKind" name="refKind" defaultValue={v("refKind") || "analytic"} className="input">
                <option value="analytic">analytic</option>
                <option value="published">published (citation below)</option>
                <option value="fine-mesh">fine mesh</option>
                <option value="shooting">shooting</option>
              </select>
            </div>
            <Input label="Citation or detail" name="refDetail" value={v("refDetail")} error={e("refDetail")} />
          </div>
        </section>
      )}
      <section className="card flex flex-wrap items-end gap-3 p-4">
        <div className="space-y-1">
          <label htmlFor="field-trialScheme" className="block text-sm font-medium">
            Trial scheme
          </label>
          <select id="field-trialScheme" name="trialScheme" defaultValue="hermite-simpson" className="input">
            {SCHEMES.map((s) => (
              <option key={s}>{s}</option>
            ))}
          </select>
        </div>
        <div className="space-y-1">
          <label htmlFor="field-trialIntervals" className="block text-sm font-medium">
            Intervals (≤ 60)
          </label>
          <input id="field-trialIntervals" name="trialIntervals" defaultValue="20" className="input w-24" inputMode="numeric" aria-invalid={e("trialIntervals") ? true : undefined} />
          <FieldError name="trialIntervals" error={e("trialIntervals")} />
        </div>
        <button type="button" className="btn-quiet" onClick={runTrial} disabled={trial.state !== "idle"} data-testid="trial-solve">
          {trial.state !== "idle" ? "Solving…" : "Trial solve"}
        </button>
        <button type="submit" name="intent" value="save" className="btn" disabled={saving} data-testid="save-problem">
          {saving ? "Saving…" : saveLabel}
        </button>
      </section>
      {trial.data?.error ? <FormError message={trial.data.error} /> : null}
      {t ? (
        <section className="space-y-3" data-testid="trial-result" data-trial-status={t.status}>
          <p className="text-sm">
            Trial solve, {t.scheme} with {t.intervals} intervals: <strong>{t.status}</strong> after {t.iterations} iterations in {(t.solveSeconds * 1000).toFixed(0)} ms
            {t.objective !== null ? <>; objective <span className="num">{t.objective.toPrecision(8)}</span></> : null}
            {t.errorRel !== null ? <>; relative error against the reference <span className="num">{t.errorRel.toExponential(2)}</span></> : null}
            {t.message ? <span className="block text-muted">{t.message}</span> : null}
          </p>
          <div className="flex flex-wrap gap-3">
            {t.stateNames.map((n) => (
              <TrajectoryChart key={`s-${n}`} name={n} solution={t.states} reference={t.reference} />
            ))}
            {t.controlNames.map((n) => (
              <TrajectoryChart key={`c-${n}`} name={n} solution={t.controls} reference={t.reference} step />
            ))}
          </div>
        </section>
      ) : null}
    </Form>
  );
}
