import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/settings";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { FormError, Notice } from "~/components/Field";
import { getDb } from "~/db/client.server";
import {
  THRESHOLD_FIELDS,
  THRESHOLD_KEYS,
  decideThresholds,
  listSubscriptions,
  listSuiteThresholds,
  proposeThresholds,
  subscribe,
  subscriptionChoices,
  subscriptionInput,
  thresholdProposal,
  unsubscribe,
} from "~/models/settings.server";
import { requireRole, requireUser } from "~/services/auth.server";
import { fieldErrors } from "~/services/forms.server";
import { roleAtLeast } from "~/services/roles";
import { THRESHOLDS, formatSetting, thresholdLabel } from "~/vocabulary";

export const meta: Route.MetaFunction = () => [{ title: "Settings · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const db = getDb();
  return {
    role: user.role,
    email: user.email,
    thresholds: listSuiteThresholds(db),
    subscriptions: listSubscriptions(db, user.id),
    choices: subscriptionChoices(db),
    fields: THRESHOLD_KEYS.map((k) => ({ key: k, help: THRESHOLD_FIELDS[k].help })),
  };
}

type Errors = Partial<Record<string, string>>;

export async function action({ request }: Route.ActionArgs) {
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  const db = getDb();
  const values = Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)]));
  if (intent === "propose") {
    const user = await requireRole(request, "engineer");
    const parsed = thresholdProposal.safeParse(values);
    if (!parsed.success) return data({ intent, errors: fieldErrors<string>(parsed.error) as Errors, values, notice: null }, { status: 400 });
    const id = proposeThresholds(db, parsed.data, user.id);
    return data({ intent, errors: {} as Errors, values: {}, notice: `Proposal ${id} for suite ${parsed.data.suiteName} sent to the admins.` });
  }
  if (intent === "save" || intent === "reject") {
    const user = await requireRole(request, "admin");
    const id = z.coerce.number().int().positive().safeParse(form.get("id"));
    if (!id.success) return data({ intent, errors: { form: "Which proposal?" } as Errors, values, notice: null }, { status: 400 });
    const out = decideThresholds(db, id.data, intent === "save" ? "saved" : "rejected", user.id);
    if (!out.ok) return data({ intent, errors: { form: out.error } as Errors, values, notice: null }, { status: 400 });
    return data({ intent, errors: {} as Errors, values: {}, notice: intent === "save" ? `Proposal ${id.data} saved: new runs use these thresholds.` : `Proposal ${id.data} rejected.` });
  }
  const user = await requireUser(request);
  if (intent === "subscribe") {
    const parsed = subscriptionInput.safeParse(values);
    if (!parsed.success) return data({ intent, errors: fieldErrors<string>(parsed.error) as Errors, values, notice: null }, { status: 400 });
    const out = subscribe(db, user.id, parsed.data);
    if (!out.ok) return data({ intent, errors: { problemId: out.error } as Errors, values, notice: null }, { status: 400 });
    return data({ intent, errors: {} as Errors, values: {}, notice: "Subscribed: you get an e-mail when a run finds a regression there." });
  }
  if (intent === "unsubscribe") {
    const id = Number(form.get("id"));
    if (Number.isInteger(id) && id > 0) unsubscribe(db, user.id, id);
    return data({ intent, errors: {} as Errors, values: {}, notice: "Unsubscribed." });
  }
  return data({ intent, errors: { form: "Unknown action." } as Errors, values, notice: null }, { status: 400 });
}

export default function Settings({ loaderData, actionData }: Route.ComponentProps) {
  const { role, email, thresholds, subscriptions, choices, fields } = loaderData;
  const busy = useNavigation().state === "submitting";
  const errors = (actionData?.errors ?? {}) as Errors;
  const values = (actionData?.values ?? {}) as Record<string, string>;
  const isEngineer = roleAtLeast(role, "engineer");
  const isAdmin = roleAtLeast(role, "admin");
  return (
    <div className="space-y-8">
      <div>
        <h1 className="text-3xl font-semibold tracking-tight">Settings</h1>
        <p className="text-muted">Regression thresholds per suite and your e-mail subscriptions.</p>
      </div>
      <Notice message={actionData?.notice} />
      <FormError message={errors.form} />
      <section className="space-y-4" aria-labelledby="sub-title">
        <h2 id="sub-title" className="text-xl font-semibold">E-mail subscriptions</h2>
        <p className="text-sm text-muted">Alerts go to {email} when a run finds a new regression in a suite or on a problem you follow.</p>
        {subscriptions.length === 0 ? <p className="text-muted">You follow nothing yet.</p> : (
          <ul className="card divide-y divide-line/60 text-sm" data-testid="subscriptions">
            {subscriptions.map((s) => (
              <li key={s.id} className="flex items-center justify-between px-4 py-2">
                <span>{s.suiteName ? <>Suite <strong>{s.suiteName}</strong></> : <>Problem <strong>{s.problemId}</strong></>}</span>
                <Form method="post"><input type="hidden" name="intent" value="unsubscribe" /><input type="hidden" name="id" value={s.id} /><button className="btn-quiet" type="submit">Unsubscribe</button></Form>
              </li>
            ))}
          </ul>
        )}
        <div className="grid gap-3 md:grid-cols-2">
          <Form method="post" className="card flex items-end gap-2 p-4" aria-label="Follow a suite">
            <input type="hidden" name="intent" value="subscribe" /><input type="hidden" name="target" value="suite" />
            <label className="flex-1 space-y-1 text-sm"><span className="font-medium">Suite</span>
              <select name="suiteName" className="input" aria-invalid={errors.suiteName ? true : undefined}>{choices.suites.map((s) => <option key={s}>{s}</option>)}</select>
              {errors.suiteName ? <span className="text-bad">{errors.suiteName}</span> : null}
            </label>
            <button className="btn" type="submit" disabled={busy || choices.suites.length === 0}>Follow</button>
          </Form>
          <Form method="post" className="card flex items-end gap-2 p-4" aria-label="Follow a problem">
            <input type="hidden" name="intent" value="subscribe" /><input type="hidden" name="target" value="problem" />
            <label className="flex-1 space-y-1 text-sm"><span className="font-medium">Problem</span>
              <select name="problemId" className="input" aria-invalid={errors.problemId ? true : undefined}>{choices.problems.map((p) => <option key={p.id} value={p.id}>{p.id} — {p.title}</option>)}</select>
              {errors.problemId ? <span className="text-bad">{errors.problemId}</span> : null}
            </label>
            <button className="btn" type="submit" disabled={busy || choices.problems.length === 0}>Follow</button>
          </Form>
        </div>
      </section>
      <section className="space-y-4" aria-labelledby="thr-title">
        <h2 id="thr-title" className="text-xl font-semibold">Regression thresholds</h2>
        <p className="text-sm text-muted">Engineers propose; an admin saves. A saved set overrides the suite file's <code>thresholds</code> for new runs.</p>
        {thresholds.length === 0 ? <p className="text-muted">No suite has been run yet.</p> : thresholds.map((s) => (
          <div key={s.suiteName} className="card space-y-3 p-4" data-testid={`thresholds-${s.suiteName}`}>
            <h3 className="font-semibold">Suite {s.suiteName} {s.saved ? <span className="text-xs text-muted">(saved set {s.saved.id} in force)</span> : <span className="text-xs text-muted">(from the suite file and defaults)</span>}</h3>
            {s.proposals.map((p) => (
              <div key={p.id} className="rounded border border-accent/50 p-3 text-sm">
                <p>Proposal {p.id} by {p.proposedBy ?? "someone"}{p.note ? `: ${p.note}` : ""}</p>
                <p className="num text-xs text-muted">{Object.entries(p.thresholds).filter(([k, v]) => v !== (s.current as unknown as Record<string, unknown>)[k]).map(([k, v]) => `${thresholdLabel(k)} ${formatSetting((s.current as unknown as Record<string, unknown>)[k])} → ${formatSetting(v)}`).join(" · ") || "no change from the current set"}</p>
                {isAdmin ? (
                  <Form method="post" className="mt-2 flex gap-2"><input type="hidden" name="id" value={p.id} />
                    <button className="btn" type="submit" name="intent" value="save" data-testid="save-proposal">Save</button>
                    <button className="btn-quiet" type="submit" name="intent" value="reject">Reject</button>
                  </Form>
                ) : null}
              </div>
            ))}
            <Form method="post" className="grid gap-3 md:grid-cols-3" aria-label={`Thresholds of ${s.suiteName}`}>
              <input type="hidden" name="intent" value="propose" /><input type="hidden" name="suiteName" value={s.suiteName} />
              {fields.map(({ key: k, help }) => {
                const err = values.suiteName === s.suiteName ? errors[k] : undefined;
                return (
                  <label key={k} className="space-y-1 text-sm">
                    <span className="font-medium">{thresholdLabel(k)}</span>
                    <input name={k} className="input num" inputMode="decimal" defaultValue={values.suiteName === s.suiteName ? values[k] : formatSetting((s.current as unknown as Record<string, unknown>)[k])} readOnly={!isEngineer} aria-invalid={err ? true : undefined} />
                    <span className={`block text-xs ${err ? "text-bad" : "text-muted"}`}>{err ?? THRESHOLDS[k as keyof typeof THRESHOLDS]?.definition ?? help}</span>
                  </label>
                );
              })}
              {isEngineer ? (
                <div className="flex items-end gap-2 md:col-span-3">
                  <label className="flex-1 space-y-1 text-sm"><span className="font-medium">Why</span><input name="note" className="input" placeholder="e.g. the shared runner moves timings by 14 %" /></label>
                  <button className="btn" type="submit" disabled={busy}>Propose</button>
                </div>
              ) : <p className="text-xs text-muted md:col-span-3">Proposing thresholds needs the engineer role.</p>}
            </Form>
          </div>
        ))}
      </section>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
