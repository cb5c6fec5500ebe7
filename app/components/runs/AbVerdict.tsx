import type { AbCheckView } from "~/models/ab-checks.server";
import { fmtAbRatio } from "~/runs/ab-result";
import { AB_CHECK_STATUSES, TONE_CLASS } from "~/vocabulary";

/** What each A/B state means, in words (from the one vocabulary). */
export const AB_STATE: Record<AbCheckView["state"], { label: string; tone: string; help: string }> = Object.fromEntries(
  Object.entries(AB_CHECK_STATUSES).map(([k, e]) => [k, { label: e.label, tone: TONE_CLASS[e.tone], help: e.definition }]),
) as Record<AbCheckView["state"], { label: string; tone: string; help: string }>;

const VERDICT_TONE: Record<string, string> = { slower: "text-bad", faster: "text-good", same: "", unclear: "text-warn" };
/** "unclear": the interval neither lies above 1 nor excludes the speed floor, so it clears nothing. */
const verdictText = (v: string) => (v === "unclear" ? "unclear: interval too wide" : v);

/**
 * An A/B check: its state, then the paired ratio head/base per case and pooled, with intervals.
 * "B/A" is the later commit's solve time over the earlier's, each ratio from paired blocks.
 */
export function AbVerdict({ check, jobLink = true }: { check: AbCheckView; jobLink?: boolean }) {
  const s = AB_STATE[check.state];
  const r = check.result;
  return (
    <div className="space-y-2 text-sm" data-testid="ab-check" data-state={check.state}>
      <p>
        <span className={`font-semibold ${s.tone}`} data-testid="ab-state">{s.label}</span>
        {" · "}
        <span className="num">{check.head.slice(0, 10)}</span> (B) against <span className="num">{check.base.slice(0, 10)}</span> (A), suite {check.suiteName}, {check.cases.length} case(s){check.auto ? ", queued automatically" : ""}
        {jobLink && check.jobId ? (
          <>
            {" · "}
            <a className="text-accent hover:underline" href={`/run-suite?job=${check.jobId}`}>job {check.jobId}</a>
          </>
        ) : null}
      </p>
      <p className="text-xs text-muted">{s.help}</p>
      {check.note ? <p className="text-xs">{check.note}</p> : null}
      {r ? (
        <div className="overflow-x-auto">
          <table className="num text-xs" data-testid="ab-table">
            <thead className="text-muted">
              <tr>
                <th className="pr-4 text-left font-medium">case</th>
                <th className="pr-4 text-left font-medium">time B/A, paired [{+((r.confidence ?? 0.99) * 100).toPrecision(4)} % interval]</th>
                <th className="pr-4 text-left font-medium">blocks</th>
                <th className="text-left font-medium">verdict</th>
              </tr>
            </thead>
            <tbody>
              {r.pooled ? (
                <tr className="font-semibold">
                  <td className="pr-4">all {r.pooled.cases} cases, pooled</td>
                  <td className="pr-4">{fmtAbRatio(r.pooled.ratio, r.pooled.low, r.pooled.high)}</td>
                  <td className="pr-4">{r.blocks}</td>
                  <td className={VERDICT_TONE[r.pooled.verdict]}>{verdictText(r.pooled.verdict)}</td>
                </tr>
              ) : null}
              {(r.judged ?? []).map((j) => (
                <tr key={`r${j.regressionId}`} data-judged={j.regressionId}>
                  <td className="pr-4">
                    <a className="text-accent hover:underline" href={`/regressions/${j.regressionId}`}>
                      regression {j.regressionId}
                    </a>
                    {j.cases.length > 1 ? `, its ${j.cases.length} cases pooled` : ""}
                  </td>
                  <td className="pr-4">{fmtAbRatio(j.ratio, j.low, j.high)}</td>
                  <td className="pr-4">{r.blocks}</td>
                  <td className={VERDICT_TONE[j.verdict ?? "unclear"]}>{j.verdict ? verdictText(j.verdict) : "not timed"}</td>
                </tr>
              ))}
              {r.cases.map((c) => (
                <tr key={c.key}>
                  <td className="pr-4">{c.key}</td>
                  <td className="pr-4">{fmtAbRatio(c.ratio, c.low, c.high)}</td>
                  <td className="pr-4">{c.blockRatios.length}</td>
                  <td className={VERDICT_TONE[c.verdict]}>
                    {verdictText(c.verdict)}
                    {c.status !== "optimal" ? ` (${c.status})` : ""}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className="mt-1 text-xs text-muted">Intervals: {r.method}; {r.repeats} timed solves per trial.</p>
        </div>
      ) : null}
    </div>
  );
}
