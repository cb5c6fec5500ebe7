import { data, Form, useNavigation } from "react-router";
import type { Route } from "./+types/account";
import { RoleBadge } from "~/components/AppShell";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { Field, FormError, Notice } from "~/components/Field";
import { getDb } from "~/db/client.server";
import { getUserById, setPassword, updateName } from "~/models/users.server";
import { checkCurrentPassword, requireUser } from "~/services/auth.server";
import { fieldErrors, type FieldErrors } from "~/services/forms.server";
import { ROLE_DESCRIPTIONS } from "~/services/roles";
import { endOneSession, listUserSessions } from "~/services/session.server";
import { changeNameSchema, changePasswordSchema } from "~/services/user-forms.server";

export const meta: Route.MetaFunction = () => [{ title: "Account · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const row = getUserById(getDb(), user.id);
  return {
    user: { name: user.name, email: user.email, role: user.role },
    createdAt: row?.createdAt ?? null,
    lastSignInAt: row?.lastSignInAt ?? null,
    sessions: listUserSessions(getDb(), user.id, user.sessionIdHash ?? null),
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
    const wrong = await checkCurrentPassword(request, user.id, parsed.data.currentPassword);
    if (wrong) return data<ActionResult>({ intent: "password", errors: { currentPassword: wrong } }, { status: wrong.startsWith("Too many") ? 429 : 400 });
    // Ends every other session; this one keeps its id, so its cookie stays valid as it is
    // (nothing to re-issue, which a form post without JavaScript could lose).
    await setPassword(db, user.id, parsed.data.newPassword, user.sessionIdHash);
    return data<ActionResult>({ intent: "done", notice: "Password changed. Other sessions have been signed out." });
  }
  if (intent === "end-session") {
    const idHash = String(form.get("session") ?? "");
    if (idHash === user.sessionIdHash) return data<ActionResult>({ intent: "done", notice: "That is this session: use Sign out to end it." }, { status: 400 });
    const ended = endOneSession(db, user.id, idHash);
    return data<ActionResult>({ intent: "done", notice: ended ? "Session ended." : "That session had already ended." });
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
      <SessionList sessions={loaderData.sessions} busy={busy} />
    </div>
  );
}

const when = (d: Date | string) => new Date(d).toISOString().slice(0, 16).replace("T", " ") + " UTC";

function SessionList({ sessions, busy }: { sessions: Route.ComponentProps["loaderData"]["sessions"]; busy: boolean }) {
  return (
    <section className="card min-w-0 space-y-4 p-6" aria-label="Signed-in sessions">
      <div>
        <h2 className="text-lg font-semibold">Signed-in sessions</h2>
        <p className="text-sm text-muted">
          Every browser signed in to this account. A session ends after 24 hours without use or 7 days after sign-in. API
          tokens are listed by an admin, not here.
        </p>
      </div>
      <div className="relative max-w-full overflow-x-auto">
      <table className="w-full text-left text-sm">
        <thead className="text-muted">
          <tr>
            <th className="py-1 pr-3 font-medium">Browser</th>
            <th className="py-1 pr-3 font-medium">Address</th>
            <th className="py-1 pr-3 font-medium">Signed in</th>
            <th className="py-1 pr-3 font-medium">Last seen</th>
            <th className="py-1 pr-3 font-medium">Ends by</th>
            <th className="py-1 font-medium">
              <span className="sr-only">Action</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {sessions.map((s) => (
            <tr key={s.idHash} className="border-t border-line" data-session={s.current ? "current" : "other"}>
              <td className="min-w-[8rem] max-w-[16rem] py-2 pr-3 break-all" title={s.userAgent ?? ""}>
                {s.userAgent || "unknown"}
              </td>
              <td className="num py-2 pr-3">{s.address ?? "unknown"}</td>
              <td className="num py-2 pr-3">{when(s.createdAt)}</td>
              <td className="num py-2 pr-3">{when(s.lastSeenAt)}</td>
              <td className="num py-2 pr-3">{when(s.expiresAt)}</td>
              <td className="py-2">
                {s.current ? (
                  <span className="text-muted">this session</span>
                ) : (
                  <Form method="post" aria-label="End session">
                    <input type="hidden" name="intent" value="end-session" />
                    <input type="hidden" name="session" value={s.idHash} />
                    <button type="submit" className="btn" disabled={busy}>
                      End
                    </button>
                  </Form>
                )}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      </div>
    </section>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
