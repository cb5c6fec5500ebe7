import { useFetcher } from "react-router";
import type { AbCheckView } from "~/models/ab-checks.server";
import { FormError } from "~/components/Field";
import { AbVerdict } from "~/components/runs/AbVerdict";

/**
 * The regression's interleaved A/B checks (newest first) and, for engineers on a speed finding,
 * the button that queues one: baseline commit (A) against flagged commit (B), affected cases only.
 */
export function AbPanel({ id, checks, canStart, speed, isDemo }: { id: number; checks: AbCheckView[]; canStart: boolean; speed: boolean; isDemo: boolean }) {
  const f = useFetcher<{ ok?: boolean; job?: { id: number }; errors?: Record<string, string>; error?: string }>();
  return (
    <section className="card space-y-3 p-4" data-testid="ab-panel">
      <h2 className="text-lg font-semibold">Interleaved A/B</h2>
      {checks.length === 0 ? (
        <p className="text-sm text-muted">
          {speed ? "Not checked yet. An A/B runs the baseline and flagged commits alternately in one sitting, so that machine load hits both alike." : "A/B compares solve times; it applies to speed findings."}
        </p>
      ) : (
        checks.map((c) => <AbVerdict key={c.id} check={c} />)
      )}
      {canStart && !isDemo ? (
        <f.Form method="post" action={`/api/regressions/${id}`}>
          <input type="hidden" name="intent" value="ab" />
          <button className="btn-quiet" type="submit" disabled={f.state !== "idle"} data-testid="confirm-ab">
            {f.state !== "idle" ? "Queuing…" : "Confirm by A/B"}
          </button>
        </f.Form>
      ) : null}
      {f.data?.job ? (
        <p className="text-sm" role="status" data-testid="ab-queued">
          Queued as <a className="text-accent hover:underline" href={`/run-suite?job=${f.data.job.id}`}>job {f.data.job.id}</a>.
        </p>
      ) : null}
      <FormError message={f.data?.errors?.form ?? f.data?.error} />
    </section>
  );
}
