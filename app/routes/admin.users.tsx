import { data, Form, useNavigation } from "react-router";
import type { Route } from "./+types/admin.users";
import { RoleBadge } from "~/components/AppShell";
import { RouteErrorBoundary } from "~/components/ErrorView";
import { Field, FormError, Notice, SelectField } from "~/components/Field";
import { getDb } from "~/db/client.server";
import { ROLES } from "~/db/schema";
import {
  changeRole,
  createUser,
  findUserByEmail,
  LastAdminError,
  listUsers,
  SelfDisableError,
  setDisabled,
} from "~/models/users.server";
import { requireRole } from "~/services/auth.server";
import { fieldErrors, formValues, type FieldErrors } from "~/services/forms.server";
import { ROLE_DESCRIPTIONS } from "~/services/roles";
import { changeRoleSchema, createUserSchema } from "~/services/user-forms.server";

export const meta: Route.MetaFunction = () => [{ title: "Users · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  const me = await requireRole(request, "admin");
  return { meId: me.id, users: listUsers(getDb()) };
}

type CreateField = "email" | "name" | "role" | "password";
type ActionResult =
  | { intent: "create"; errors: FieldErrors<CreateField>; values: Record<"email" | "name" | "role", string>; notice?: undefined }
  | { intent: "role"; userId: number; errors: FieldErrors<"role">; notice?: undefined }
  | { intent: "done"; notice: string; errors?: undefined };

export async function action({ request }: Route.ActionArgs) {
  const me = await requireRole(request, "admin");
  const db = getDb();
  const form = await request.formData();
  const intent = form.get("intent");
  if (intent === "create") {
    const values = formValues(form, ["email", "name", "role"] as const);
    const parsed = createUserSchema.safeParse({ ...values, password: form.get("password") ?? "" });
    if (!parsed.success)
      return data<ActionResult>({ intent: "create", errors: fieldErrors<CreateField>(parsed.error), values }, { status: 400 });
    if (findUserByEmail(db, parsed.data.email))
      return data<ActionResult>({ intent: "create", errors: { email: "An account with this e-mail already exists." }, values }, { status: 400 });
    const user = await createUser(db, parsed.data);
    return data<ActionResult>({ intent: "done", notice: `Created ${user.email} as ${user.role}.` });
  }
  if (intent === "role") {
    const parsed = changeRoleSchema.safeParse({ userId: form.get("userId"), role: form.get("role") });
    const userId = Number(form.get("userId"));
    if (!parsed.success) return data<ActionResult>({ intent: "role", userId, errors: fieldErrors<"role">(parsed.error) }, { status: 400 });
    try {
      const updated = changeRole(db, parsed.data.userId, parsed.data.role);
      if (!updated) throw data({ message: "No such user." }, { status: 404 });
      return data<ActionResult>({ intent: "done", notice: `${updated.email} is now ${updated.role}.` });
    } catch (err) {
      if (err instanceof LastAdminError) return data<ActionResult>({ intent: "role", userId, errors: { role: err.message } }, { status: 400 });
      throw err;
    }
  }
  if (intent === "disable" || intent === "enable") {
    const parsed = changeRoleSchema.shape.userId.safeParse(form.get("userId"));
    if (!parsed.success) throw data({ message: "No such user." }, { status: 400 });
    try {
      const updated = setDisabled(db, parsed.data, intent === "disable", me.id);
      if (!updated) throw data({ message: "No such user." }, { status: 404 });
      return data<ActionResult>({ intent: "done", notice: `${updated.email} is ${intent === "disable" ? "disabled" : "enabled again"}.` });
    } catch (err) {
      if (err instanceof LastAdminError || err instanceof SelfDisableError)
        return data<ActionResult>({ intent: "role", userId: parsed.data, errors: { role: err.message } }, { status: 400 });
      throw err;
    }
  }
  throw data({ message: "Unknown action." }, { status: 400 });
}

export default function AdminUsers({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const busy = navigation.state === "submitting";
  const create = actionData?.intent === "create" ? actionData : undefined;
  const roleResult = actionData?.intent === "role" ? actionData : undefined;
  return (
    <div className="space-y-8">
      <div>
        <h1 className="text-3xl font-semibold tracking-tight">Users</h1>
        <p className="text-muted">Who may sign in, and what each role may do.</p>
      </div>
      <Notice message={actionData?.notice} />
      <ul className="grid gap-3 sm:grid-cols-3">
        {ROLES.map((r) => (
          <li key={r} className="card flex items-start gap-2 p-4 text-sm">
            <RoleBadge role={r} /> <span className="text-muted">{ROLE_DESCRIPTIONS[r]}</span>
          </li>
        ))}
      </ul>
      <section className="card overflow-x-auto">
        <table className="w-full text-left text-sm" data-testid="users-table">
          <thead className="border-b border-line text-muted">
            <tr>
              <th className="px-4 py-3 font-medium">Name</th>
              <th className="px-4 py-3 font-medium">E-mail</th>
              <th className="px-4 py-3 font-medium">Last sign-in</th>
              <th className="px-4 py-3 font-medium">Role</th>
              <th className="px-4 py-3 font-medium">Access</th>
            </tr>
          </thead>
          <tbody>
            {loaderData.users.map((u) => {
              const err = roleResult?.userId === u.id ? roleResult.errors.role : undefined;
              return (
                <tr key={u.id} className="border-b border-line last:border-0" data-user-row={u.email}>
                  <td className="px-4 py-3">
                    {u.name}
                    {u.id === loaderData.meId ? <span className="ml-2 text-xs text-muted">(you)</span> : null}
                  </td>
                  <td className="px-4 py-3 num">{u.email}</td>
                  <td className="px-4 py-3 num text-muted">
                    {u.lastSignInAt ? new Date(u.lastSignInAt).toISOString().replace("T", " ").slice(0, 16) : "never"}
                  </td>
                  <td className="px-4 py-3">
                    {/* Re-mounted after an error so the picker shows the stored role again. */}
                    <Form method="post" className="flex flex-wrap items-center gap-2" key={`${u.id}:${u.role}:${err ?? ""}`}>
                      <input type="hidden" name="intent" value="role" />
                      <input type="hidden" name="userId" value={u.id} />
                      <select name="role" defaultValue={u.role} className="input w-auto py-1" aria-label={`Role of ${u.email}`}>
                        {ROLES.map((r) => (
                          <option key={r} value={r}>
                            {r}
                          </option>
                        ))}
                      </select>
                      <button type="submit" className="btn-quiet" disabled={busy}>
                        Save
                      </button>
                      {err ? (
                        <span className="w-full text-sm text-bad" data-field-error="role">
                          {err}
                        </span>
                      ) : null}
                    </Form>
                  </td>
                  <td className="px-4 py-3">
                    <Form method="post" className="flex items-center gap-2">
                      <input type="hidden" name="intent" value={u.disabledAt ? "enable" : "disable"} />
                      <input type="hidden" name="userId" value={u.id} />
                      {u.disabledAt ? <span className="text-sm text-bad">disabled</span> : null}
                      <button type="submit" className="btn-quiet" disabled={busy || u.id === loaderData.meId} data-access-button>
                        {u.disabledAt ? "Enable" : "Disable"}
                      </button>
                    </Form>
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </section>
      <section className="card max-w-xl space-y-4 p-6">
        <h2 className="text-lg font-semibold">Add a user</h2>
        <Form
          method="post"
          className="space-y-4"
          noValidate
          aria-label="Add a user"
          key={actionData?.intent === "done" ? actionData.notice : "create-user"}
        >
          <input type="hidden" name="intent" value="create" />
          <FormError message={create?.errors.form} />
          <Field label="Name" name="name" defaultValue={create?.values.name} error={create?.errors.name} autoComplete="off" />
          <Field label="E-mail" name="email" type="email" defaultValue={create?.values.email} error={create?.errors.email} autoComplete="off" />
          <SelectField label="Role" name="role" options={ROLES.map((r) => ({ value: r, label: r }))} defaultValue={create?.values.role || "viewer"} error={create?.errors.role} />
          <Field
            label="Initial password"
            name="password"
            type="password"
            autoComplete="new-password"
            error={create?.errors.password}
            hint="At least 8 characters. Tell the person through another channel."
          />
          <button type="submit" className="btn" disabled={busy}>
            Create user
          </button>
        </Form>
      </section>
    </div>
  );
}

export const ErrorBoundary = RouteErrorBoundary;
