import { data, Form, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/signin";
import { Field, FormError } from "~/components/Field";
import { LogoMark } from "~/components/Logo";
import { ThemeToggle } from "~/components/ThemeToggle";
import { getOptionalUser, safeRedirectTo, signIn } from "~/services/auth.server";

export const meta: Route.MetaFunction = () => [{ title: "Sign in · Arcwatch" }];

export async function loader({ request }: Route.LoaderArgs) {
  const url = new URL(request.url);
  const redirectTo = safeRedirectTo(url.searchParams.get("redirectTo"), "/", url.origin);
  if (await getOptionalUser(request)) throw redirect(redirectTo);
  return { redirectTo };
}

export async function action({ request }: Route.ActionArgs) {
  const form = await request.clone().formData();
  const redirectTo = safeRedirectTo(form.get("redirectTo"), "/", new URL(request.url).origin);
  const outcome = await signIn(request);
  if (!outcome.ok) return data({ errors: outcome.errors, values: outcome.values }, { status: outcome.status });
  return redirect(redirectTo, { headers: outcome.headers });
}

export default function SignIn({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const busy = navigation.state === "submitting";
  const errors = actionData?.errors;
  return (
    <main className="flex min-h-[85vh] items-center justify-center px-4 py-12">
      <div className="w-full max-w-md space-y-6">
        <div className="flex items-center justify-between">
          <div className="flex items-center gap-3">
            <LogoMark size={44} />
            <div>
              <h1 className="text-2xl font-semibold tracking-tight">Arcwatch</h1>
              <p className="text-sm text-muted">Solver accuracy and speed, commit by commit.</p>
            </div>
          </div>
          <ThemeToggle />
        </div>
        <Form method="post" className="card space-y-4 p-6" noValidate aria-label="Sign in">
          <h2 className="text-lg font-semibold">Sign in</h2>
          <FormError message={errors?.form} />
          <input type="hidden" name="redirectTo" value={loaderData.redirectTo} />
          <Field
            label="E-mail"
            name="email"
            type="email"
            autoComplete="username"
            defaultValue={actionData?.values.email ?? ""}
            error={errors?.email}
            autoFocus
          />
          <Field label="Password" name="password" type="password" autoComplete="current-password" error={errors?.password} />
          <button type="submit" className="btn w-full justify-center" disabled={busy}>
            {busy ? "Signing in…" : "Sign in"}
          </button>
        </Form>
        <p className="text-center text-sm text-muted">Accounts are created by an Arcwatch admin.</p>
      </div>
    </main>
  );
}
