/**
 * Upload client: posts a recorded run (app/runs/payload.ts) to an Arcwatch server's ingestion
 * endpoint with a bearer token. `url` is either the endpoint itself or the server's base URL,
 * in which case `/api/runs` is appended.
 */
import type { Db } from "../../app/db/client.server";
import { buildRunPayload } from "../../app/models/recording.server";

export const INGEST_PATH = "/api/runs";

export function ingestUrl(url: string): string {
  const u = new URL(url);
  if (u.pathname === "/" || u.pathname === "") u.pathname = INGEST_PATH;
  return u.toString();
}

/** What an upload adds to the stored run: which shard of which CI pipeline it is, and the runner's machine class. */
export interface UploadExtra {
  shard?: { index: number; count: number; pipeline: string } | null;
  machineClass?: string | null;
}

export async function uploadRun(db: Db, runId: string, url: string, token: string, extra: UploadExtra = {}): Promise<{ url: string; status: number; body: unknown }> {
  const target = ingestUrl(url);
  const payload = buildRunPayload(db, runId);
  if (extra.shard) payload.run.shard = extra.shard;
  if (extra.machineClass) payload.run.machineClass = extra.machineClass;
  const res = await fetch(target, {
    method: "POST",
    headers: { "content-type": "application/json", authorization: `Bearer ${token}` },
    body: JSON.stringify(payload),
  });
  const text = await res.text();
  let body: unknown = text;
  try {
    body = JSON.parse(text);
  } catch {
    /* keep text */
  }
  if (!res.ok) throw new Error(`upload to ${target} failed: HTTP ${res.status} ${typeof body === "string" ? body.slice(0, 300) : JSON.stringify(body).slice(0, 300)}`);
  return { url: target, status: res.status, body };
}

export type ServerConfirmation = { state: string; jobId: number | null; note: string | null; regressionIds: number[]; standing: number[]; undecided: number[] };

/**
 * Polls GET /api/runs/:id on the server an upload went to until the A/B check of the run's speed
 * regressions has a verdict (an upload token may read the runs it uploaded). Null when the server
 * has no check for the run; the last state ("awaiting") when `timeoutSeconds` pass first.
 */
export async function awaitServerConfirmation(uploadUrl: string, runId: string, token: string, timeoutSeconds: number, progress?: (s: string) => void, pollMs = 3000): Promise<ServerConfirmation | null> {
  const url = new URL(`/api/runs/${encodeURIComponent(runId)}`, uploadUrl);
  const until = Date.now() + timeoutSeconds * 1000;
  let last: ServerConfirmation | null = null;
  for (;;) {
    try {
      const r = await fetch(url, { headers: { authorization: `Bearer ${token}`, accept: "application/json" } });
      if (r.ok) last = ((await r.json()) as { confirmation?: ServerConfirmation | null }).confirmation ?? null;
    } catch {
      // The server may be restarting: keep polling until the deadline.
    }
    if (!last || last.state !== "awaiting" || Date.now() >= until) return last;
    progress?.(`waiting for the server's interleaved A/B (job ${last.jobId}) on ${last.regressionIds.length} speed regression(s)…`);
    await new Promise((res) => setTimeout(res, pollMs));
  }
}
