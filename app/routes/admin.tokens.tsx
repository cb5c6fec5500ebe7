import { data, Form, useNavigation } from "react-router";
import type { Route } from "./+types/admin.tokens";
import { RoleBadge } from "~/components/AppShell";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { Field, FormError, Notice, SelectField } from "~/components/Field";
import { getDb } from "~/db/client.server";
import { ROLES, TOKEN_SCOPES } from "~/db/schema";
import { requireRole } from "~/services/auth.server";
import { fieldErrors, formValues, type FieldErrors } from "~/services/forms.server";
import { createApiToken, listApiTokens, revokeApiToken } from "~/services/tokens.server";
import { createTokenSchema, revokeTokenSchema } from "~/services/user-forms.server";

export const meta: Route.MetaFunction = () => [{ title: "API tokens · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, "admin");
  return { tokens: listApiTokens(getDb()) };
}

type TokenField = "name" | "role" | "scope" | "suite";
const SCOPE_LABELS: Record<(typeof TOKEN_SCOPES)[number], string> = {
  full: "full: acts with its role everywhere",
  upload: "upload only: a CI runner (uploads runs, reads its own uploads)",
};

type ActionResult =
  | { intent: "create"; errors: FieldErrors<TokenField>; values: Record<TokenField, string>; token?: undefined; notice?: undefined }
  | { intent: "created"; token: string; name: string; notice: string; errors?: undefined }
  | { intent: "done"; notice: string; errors?: undefined; token?: undefined };

export async function action({ request }: Route.ActionArgs) {
  const admin = await requireRole(request, "admin");
  const db = getDb();
  const form = await request.formData();
  const intent = form.get("intent");
  if (intent === "create") {
    const values = formValues(form, ["name", "role", "scope", "suite"] as const);
    const parsed = createTokenSchema.safeParse({ ...values, scope: values.scope || undefined });
    if (!parsed.success)
      return data<ActionResult>({ intent: "create", errors: fieldErrors<TokenField>(parsed.error), values }, { status: 400 });
    const { name, role, scope, suite } = parsed.data;
    // An upload token needs the engineer role to upload; its scope keeps it off every other route.
    const { token, row } = createApiToken(db, { name, role: scope === "upload" ? "engineer" : role, scope, suiteName: suite || null, createdById: admin.id });
    const what = row.scope === "upload" ? `upload only${row.suiteName ? `, suite ${row.suiteName}` : ""}` : row.role;
    return data<ActionResult>({ intent: "created", token, name: row.name, notice: `Created token “${row.name}” (${what}).` });
  }
  if (intent === "revoke") {
    const parsed = revokeTokenSchema.safeParse({ tokenId: form.get("tokenId") });
    if (!parsed.success) throw data({ message: "No such token." }, { status: 400 });
    const ok = revokeApiToken(db, parsed.data.tokenId);
    return data<ActionResult>({ intent: "done", notice: ok ? "Token revoked." : "That token was already revoked." });
  }
  throw data({ message: "Unknown action." }, { status: 400 });
}

function when(d: Date | string | null) {
  return d ? new Date(d).toISOString().replace("T", " ").slice(0, 16) : "—";
}

export default function AdminTokens({ loaderData, actionData }: Route.ComponentProps) {
  const busy = useNavigation().state === "submitting";
  const create = actionData?.intent === "create" ? actionData : undefined;
  const created = actionData?.intent === "created" ? actionData : undefined;
  return (
    <div className="space-y-8">
      <div>
        <h1 className="text-3xl font-semibold tracking-tight">API tokens</h1>
        <p className="text-muted">
          For programs that call the API (CI runners uploading results, scripts). Send as{" "}
          <code className="num">Authorization: Bearer aw_…</code>. A token acts with its role, never above its creator's. An
          upload-only token is for CI runners: it can upload runs (optionally of one suite) and read back what it uploaded, and
          every other page and API refuses it.
        </p>
      </div>
      <Notice message={actionData?.notice} />
      {created ? (
        <section className="card space-y-2 border-accent p-5" data-testid="new-token">
          <p className="font-semibold">Copy the token “{created.name}” now: it is shown only once.</p>
          <pre className="num overflow-x-auto rounded-lg bg-raised px-4 py-3 text-sm" data-token>
            {created.token}
          </pre>
        </section>
      ) : null}
      <section className="card overflow-x-auto">
        <table className="w-full text-left text-sm" data-testid="tokens-table">
          <thead className="border-b border-line text-muted">
            <tr>
              <th className="px-4 py-3 font-medium">Name</th>
              <th className="px-4 py-3 font-medium">Starts with</th>
              <th className="px-4 py-3 font-medium">Role</th>
              <th className="px-4 py-3 font-medium">May</th>
              <th className="px-4 py-3 font-medium">Created (UTC)</th>
              <th className="px-4 py-3 font-medium">Last used (UTC)</th>
              <th className="px-4 py-3 font-medium">State</th>
            </tr>
          </thead>
          <tbody>
            {loaderData.tokens.length === 0 ? (
              <tr>
                <td colSpan={7} className="px-4 py-6 text-center text-muted">
                  No tokens yet.
                </td>
              </tr>
            ) : (
              loaderData.tokens.map((t) => (
                <tr key={t.id} className="border-b border-line last:border-0" data-token-row={t.name}>
                  <td className="px-4 py-3">
                    {t.name}
                    {t.createdBy ? <span className="block text-xs text-muted">by {t.createdBy}</span> : null}
                  </td>
                  <td className="num px-4 py-3">{t.prefix}…</td>
                  <td className="px-4 py-3">
                    <RoleBadge role={t.role} />
                  </td>
                  <td className="px-4 py-3" data-token-scope={t.scope}>
                    {t.scope === "upload" ? `upload runs${t.suiteName ? ` of ${t.suiteName}` : ""}` : "everything its role allows"}
                  </td>
                  <td className="num px-4 py-3 text-muted">{when(t.createdAt)}</td>
                  <td className="num px-4 py-3 text-muted">{when(t.lastUsedAt)}</td>
                  <td className="px-4 py-3">
                    {t.revokedAt ? (
                      <span className="text-muted">revoked {when(t.revokedAt)}</span>
                    ) : (
                      <Form method="post">
                        <input type="hidden" name="intent" value="revoke" />
                        <input type="hidden" name="tokenId" value={t.id} />
                        <button type="submit" className="btn-quiet" disabled={busy}>
                          Revoke
                        </button>
                      </Form>
                    )}
                  </td>
                </tr>
              ))
            )}
          </tbody>
        </table>
      </section>
      <section className="card max-w-xl space-y-4 p-6">
        <h2 className="text-lg font-semibold">New token</h2>
        <Form method="post" className="space-y-4" noValidate aria-label="Create a token" key={created?.token ?? "create-token"}>
          <input type="hidden" name="intent" value="create" />
          <FormError message={create?.errors.form} />
          <Field label="Name" name="name" defaultValue={create?.values.name} error={create?.errors.name} autoComplete="off" />
          <SelectField label="Role" name="role" id="token-role" options={ROLES.map((r) => ({ value: r, label: r }))} defaultValue={create?.values.role || "engineer"} error={create?.errors.role} />
          <SelectField label="May" name="scope" id="token-scope" options={TOKEN_SCOPES.map((s) => ({ value: s, label: SCOPE_LABELS[s] }))} defaultValue={create?.values.scope || "full"} error={create?.errors.scope} />
          <Field
            label="Only this suite (upload tokens, optional)"
            name="suite"
            defaultValue={create?.values.suite}
            error={create?.errors.suite}
            autoComplete="off"
            placeholder="e.g. full"
          />
          <button type="submit" className="btn" disabled={busy}>
            Create token
          </button>
        </Form>
      </section>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
