import { redirect } from "react-router";
import type { Route } from "./+types/signout";
import { signOutHeaders } from "~/services/auth.server";

/** POST ends the session (the root middleware has already refused other origins). */
export async function action({ request }: Route.ActionArgs) {
  return redirect("/signin", { headers: await signOutHeaders(request) });
}

/** Signing out changes state, so a plain GET only sends the visitor away. */
export async function loader() {
  return redirect("/");
}
