import { handleIngest } from "~/services/ingest.server";

/** GET /api/ingest: tells a caller to POST. */
export async function loader() {
  return Response.json({ error: "POST an arcwatch-run/1 payload with Authorization: Bearer <token>." }, { status: 405, headers: { Allow: "POST" } });
}

/** POST /api/ingest (engineer API token): same as POST /api/runs. */
export async function action({ request }: { request: Request }) {
  return handleIngest(request);
}
