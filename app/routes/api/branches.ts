import type { Route } from "./+types/branches";
import { listBranches, listCommits } from "~/services/git.server";
import { requireUser } from "~/services/auth.server";

/** GET /api/branches (viewer or token): local branches with tip commit, subject and date; `?ref=<branch>` adds its last 30 commits. */
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const ref = new URL(request.url).searchParams.get("ref");
  try {
    const branches = await listBranches();
    const commits = ref ? await listCommits(ref, 30) : [];
    return Response.json({ branches, commits });
  } catch (err) {
    return Response.json({ error: `The repository could not be read: ${(err as Error).message}` }, { status: 500 });
  }
}
