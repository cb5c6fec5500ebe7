import { data, Form, useNavigation } from "react-router";
import type { Route } from "./+types/account";
import { RoleBadge } from "~/components/AppShell";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { Field, FormError, Notice } from "~/components/Field";
import { getDb } from "~/db/client.server";
import { getUserById, setPassword, updateName } from "~/models/users.server";
import { requireUser } from "~/services/auth.server";
import { fieldErrors, type FieldErrors } from "~/services/forms.server";
import { verifyPassword } from "~/services/password.server";
import { ROLE_DESCRIPTIONS } from "~/services/roles";
import { getSession, sessionStorage } from "~/services/session.server";
import { changeNameSchema, changePasswordSchema } from "~/services/user-forms.server";

export const meta: Route.MetaFunction = () => [{ title: "Account · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const row = getUserById(getDb(), user.id);
  return {
    user: { name: user.name, email: user.email, role: user.role },
    createdAt: row?.createdAt ?? null,
    lastSignInAt: row?.lastSignInAt ?? null,
  };
}

type PasswordField = "currentPassword" | "newPassword" | "confirmPassword";
type ActionResult =
  | { intent: "name"; errors: FieldErrors<"name">; values: { name: string }; notice?: undefined }
  | { intent: "password"; errors: FieldErrors<PasswordField>; notice?: undefined }
  | { intent: "done"; notice: string; errors?: undefined };

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  if (user.via !== "session") throw data({ message: "Sign in with a password to change the account." }, { status: 403 });
  const db = getDb();
  const form = await request.formData();
  const intent = form.get("intent");
  if (intent === "name") {
    const values = { name: String(form.get("name") ?? "") };
    const parsed = changeNameSchema.safeParse(values);
    if (!parsed.success) return data<ActionResult>({ intent: "name", errors: fieldErrors<"name">(parsed.error), values }, { status: 400 });
    updateName(db, user.id, parsed.data.name);
    return data<ActionResult>({ intent: "done", notice: "Name saved." });
  }
  if (intent === "password") {
    const parsed = changePasswordSchema.safeParse({
      currentPassword: form.get("currentPassword") ?? "",
      newPassword: form.get("newPassword") ?? "",
      confirmPassword: form.get("confirmPassword") ?? "",
    });
    if (!parsed.success) return data<ActionResult>({ intent: "password", errors: fieldErrors<PasswordField>(parsed.error) }, { status: 400 });
    const row = getUserById(db, user.id);
    if (!row || !(await verifyPassword(row.passwordHash, parsed.data.currentPassword)))
      return data<ActionResult>({ intent: "password", errors: { currentPassword: "That is not your current password." } }, { status: 400 });
    const version = await setPassword(db, user.id, parsed.data.newPassword);
    // Other sessions are now invalid; keep this one by re-issuing its cookie with the new version.
    const session = await getSession(request);
    session.set("sessionVersion", version);
    return data<ActionResult>(
      { intent: "done", notice: "Password changed. Other sessions have been signed out." },
      { headers: { "Set-Cookie": await sessionStorage().commitSession(session) } },
    );
  }
  throw data({ message: "Unknown action." }, { status: 400 });
}

export default function Account({ loaderData, actionData }: Route.ComponentProps) {
  const { user } = loaderData;
  const busy = useNavigation().state === "submitting";
  const nameResult = actionData?.intent === "name" ? actionData : undefined;
  const pwResult = actionData?.intent === "password" ? actionData : undefined;
  return (
    <div className="space-y-8">
      <div>
        <h1 className="text-3xl font-semibold tracking-tight">Account</h1>
        <p className="text-muted">
          Signed in as <span className="num text-ink">{user.email}</span>
        </p>
      </div>
      <Notice message={actionData?.notice} />
      <section className="card flex flex-wrap items-center gap-3 p-5 text-sm">
        <RoleBadge role={user.role} />
        <span className="text-muted">{ROLE_DESCRIPTIONS[user.role]}</span>
        <span className="text-muted">Roles are changed by an admin.</span>
      </section>
      <div className="grid gap-6 lg:grid-cols-2">
        <section className="card space-y-4 p-6">
          <h2 className="text-lg font-semibold">Name</h2>
          <Form method="post" className="space-y-4" noValidate aria-label="Change name">
            <input type="hidden" name="intent" value="name" />
            <Field label="Display name" name="name" defaultValue={nameResult?.values.name ?? user.name} error={nameResult?.errors.name} />
            <button type="submit" className="btn" disabled={busy}>
              Save name
            </button>
          </Form>
        </section>
        <section className="card space-y-4 p-6">
          <h2 className="text-lg font-semibold">Password</h2>
          <Form method="post" className="space-y-4" noValidate aria-label="Change password">
            <input type="hidden" name="intent" value="password" />
            <FormError message={pwResult?.errors.form} />
            <Field label="Current password" name="currentPassword" type="password" autoComplete="current-password" error={pwResult?.errors.currentPassword} />
            <Field label="New password" name="newPassword" type="password" autoComplete="new-password" error={pwResult?.errors.newPassword} hint="At least 8 characters." />
            <Field label="New password again" name="confirmPassword" type="password" autoComplete="new-password" error={pwResult?.errors.confirmPassword} />
            <button type="submit" className="btn" disabled={busy}>
              Change password
            </button>
          </Form>
        </section>
      </div>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
