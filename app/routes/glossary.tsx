import type { Route } from "./+types/glossary";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { requireUser } from "~/services/auth.server";
import {
  AB_CHECK_STATUSES,
  CASE_STATUSES,
  DEMO,
  DIRECTION,
  JOB_STATUSES,
  METRICS,
  REGRESSION_KINDS,
  REGRESSION_STATUSES,
  RUN_STATUSES,
  SCHEME_PALETTE,
  SCHEMES,
  TERMS,
  THRESHOLDS,
  TONE_CLASS,
  schemeColour,
  type Entry,
  type StatusEntry,
} from "~/vocabulary";

export const meta: Route.MetaFunction = () => [{ title: "Glossary · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  return null;
}

function Section({ id, title, entries, tone }: { id: string; title: string; entries: Record<string, Entry>; tone?: boolean }) {
  // Several keys may share one label (two spellings of “solved”): list each label once.
  const seen = new Set<string>();
  const rows = Object.entries(entries).filter(([, e]) => (seen.has(e.label) ? false : (seen.add(e.label), true)));
  return (
    <section className="card space-y-2 p-4" aria-labelledby={`g-${id}`} data-glossary-section={id}>
      <h2 id={`g-${id}`} className="text-lg font-semibold">
        {title}
      </h2>
      <dl className="grid gap-x-4 gap-y-2 text-sm sm:grid-cols-[minmax(10rem,16rem)_1fr]">
        {rows.map(([k, e]) => (
          <div key={k} className="contents" data-term={k}>
            <dt className={`font-medium ${tone ? TONE_CLASS[(e as StatusEntry).tone] : ""}`}>{e.label}</dt>
            <dd className="text-muted">{e.definition}</dd>
          </div>
        ))}
      </dl>
    </section>
  );
}

/** Every term, metric, status, symbol and colour of app/vocabulary.ts, as the pages use them. */
export default function Glossary() {
  return (
    <div className="space-y-6">
      <div>
        <h1 className="text-3xl font-semibold tracking-tight">Glossary</h1>
        <p className="text-muted">What every word, number, symbol and colour on Arcwatch's pages means. Each is defined once and used the same way on every page.</p>
      </div>
      <section className="card space-y-2 p-4" aria-labelledby="g-symbols" data-glossary-section="symbols">
        <h2 id="g-symbols" className="text-lg font-semibold">
          Symbols
        </h2>
        <dl className="grid gap-x-4 gap-y-2 text-sm sm:grid-cols-[minmax(10rem,16rem)_1fr]">
          {Object.entries(DIRECTION).map(([k, d]) => (
            <div key={k} className="contents" data-term={k}>
              <dt className={`font-medium ${TONE_CLASS[d.tone]}`}>
                {d.symbol} {d.label}
              </dt>
              <dd className="text-muted">{d.definition} Used on the run matrix, the history chart, the runs table and the findings list.</dd>
            </div>
          ))}
          <div className="contents" data-term="demo">
            <dt>
              <span className="rounded bg-warn/15 px-1.5 text-xs font-semibold text-warn">{DEMO.label}</span>
            </dt>
            <dd className="text-muted">{DEMO.definition}</dd>
          </div>
        </dl>
      </section>
      <Section id="terms" title="Terms" entries={TERMS} />
      <Section id="metrics" title="Metrics" entries={METRICS} />
      <Section id="kinds" title="Kinds of finding" entries={REGRESSION_KINDS} />
      <Section id="case-statuses" title="How a case ended" entries={CASE_STATUSES} tone />
      <Section id="run-statuses" title="Run statuses" entries={RUN_STATUSES} tone />
      <Section id="job-statuses" title="Job statuses" entries={JOB_STATUSES} tone />
      <Section id="regression-statuses" title="Triage statuses" entries={REGRESSION_STATUSES} tone />
      <Section id="ab-statuses" title="Interleaved A/B checks" entries={AB_CHECK_STATUSES} tone />
      <section className="card space-y-2 p-4" aria-labelledby="g-schemes" data-glossary-section="schemes">
        <h2 id="g-schemes" className="text-lg font-semibold">
          Schemes and their colours
        </h2>
        <ul className="space-y-1 text-sm">
          {Object.entries(SCHEMES).map(([k, e]) => (
            <li key={k} className="flex items-start gap-2" data-term={k}>
              <svg width="28" height="14" aria-hidden="true" className="mt-1 shrink-0">
                <rect width="28" height="14" rx="3" fill={schemeColour(k)} />
              </svg>
              <span>
                <strong>{e.label}</strong> <code className="text-xs text-muted">{k}</code>: {e.definition} <span className="text-muted">({SCHEME_PALETTE[k as keyof typeof SCHEME_PALETTE].name})</span>
              </span>
            </li>
          ))}
        </ul>
        <p className="text-xs text-muted">
          Colours from the colour-blind-safe palette of M. Okabe and K. Ito, “Color Universal Design (CUD): how to make figures and presentations that are friendly to colorblind people” (2008).
        </p>
      </section>
      <Section id="thresholds" title="Regression thresholds (settings)" entries={THRESHOLDS} />
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
