/**
 * Problem saves compile on a solver thread, not on the request thread (issue 12, item 2):
 * through HTTP against the built server on loopback. One solver thread with a queue of one
 * makes the queue bound reachable. A chain problem of 2,000 states takes well over a second of
 * CPU to compile (measured here: about 1.4 s CPU on this machine; tests/helpers/load-problem.ts),
 * so a compile on the request thread would hold every other request for that long.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { chainProblem } from "../helpers/load-problem";
import { startTestServer, type RunningServer } from "../helpers/server";

let server: RunningServer;
let cookie = "";
beforeAll(async () => {
  server = await startTestServer({ env: { ARCWATCH_SOLVER_WORKERS: "1", ARCWATCH_SOLVER_QUEUE: "1", ARCWATCH_JOB_WORKER: "0" } });
  const r = await fetch(`${server.url}/signin`, {
    method: "POST",
    headers: { Origin: server.url, "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ email: "engineer@arcwatch.test", password: "engineer-demo-pass" }),
    redirect: "manual",
  });
  expect(r.status).toBe(302);
  cookie = r.headers.get("set-cookie")!.split(";")[0]!;
}, 400_000);
afterAll(async () => {
  await server?.stop();
});

function saveJson(id: string, problemJson: string, method: "POST" | "PUT" = "POST") {
  const p = method === "POST" ? "/api/problems" : `/api/problems/${id}`;
  const started = Date.now();
  return fetch(`${server.url}${p}`, {
    method,
    headers: { Origin: server.url, Cookie: cookie, "Content-Type": "application/json" },
    body: JSON.stringify({ id, problemJson }),
  }).then(async (r) => ({ status: r.status, retryAfter: r.headers.get("retry-after"), body: (await r.json()) as Record<string, unknown>, ms: Date.now() - started, at: Date.now() }));
}

async function healthWhile(pending: Promise<unknown>): Promise<number[]> {
  let done = false;
  void pending.finally(() => (done = true));
  const ms: number[] = [];
  while (!done) {
    const t0 = performance.now();
    const r = await fetch(`${server.url}/api/health`);
    await r.text();
    if (!done) ms.push(performance.now() - t0);
    await new Promise((r) => setTimeout(r, 20));
  }
  return ms;
}

describe("problem saves off the request thread", () => {
  it("answers the health check while a large problem compiles, then saves it and its new version", async () => {
    const big = chainProblem(2000);
    const save = saveJson("load-chain-2000", big);
    const health = await healthWhile(save);
    const saved = await save;
    expect(saved.status, JSON.stringify(saved.body).slice(0, 300)).toBe(201);
    expect(saved.body.versionHash).toMatch(/^[0-9a-f]{16,}$/);
    // Answers came in while the save was still compiling: several of them, each far quicker than the save.
    expect(health.length).toBeGreaterThanOrEqual(3);
    const worst = Math.max(...health);
    expect(worst).toBeLessThan(saved.ms / 2);
    const sorted = [...health].sort((a, b) => a - b);
    expect(sorted[Math.floor(sorted.length / 2)]!).toBeLessThan(250);

    // An edit through PUT goes the same way and stores a new version.
    const edited = saveJson("load-chain-2000", big.replace('"Load chain 2000"', '"Load chain 2000, edited"'), "PUT");
    const healthEdit = await healthWhile(edited);
    const e = await edited;
    expect(e.status, JSON.stringify(e.body).slice(0, 300)).toBe(200);
    expect(e.body.newVersion).toBe(true);
    expect(e.body.versionHash).not.toBe(saved.body.versionHash);
    expect(Math.max(...healthEdit)).toBeLessThan(e.ms / 2);
    const list = (await (await fetch(`${server.url}/api/problems?q=load-chain-2000`, { headers: { Cookie: cookie } })).json()) as { problems: { id: string; title: string }[] };
    expect(list.problems.find((p) => p.id === "load-chain-2000")?.title).toBe("Load chain 2000, edited");
  }, 240_000);

  it("refuses with 503 and Retry-After when the thread and its queue are taken; an error still comes back by field", async () => {
    const big = chainProblem(2000);
    const all = await Promise.all([saveJson("load-a", big), saveJson("load-b", big), saveJson("load-c", big)]);
    const busy = all.filter((r) => r.status === 503);
    expect(busy.length).toBe(1);
    expect(Number(busy[0]!.retryAfter)).toBeGreaterThan(0);
    expect(String(busy[0]!.body.error)).toMatch(/busy/);
    expect(all.filter((r) => r.status === 201).length).toBe(2);
    // The add page's form answers the same way: the message at the form, what was typed kept.
    const page = (problemJson: string, id: string) =>
      fetch(`${server.url}/problems/new`, {
        method: "POST",
        headers: { Origin: server.url, Cookie: cookie, "Content-Type": "application/x-www-form-urlencoded" },
        body: new URLSearchParams({ mode: "upload", id, problemJson }),
        redirect: "manual",
      }).then(async (r) => ({ status: r.status, location: r.headers.get("location"), retryAfter: r.headers.get("retry-after"), text: await r.text() }));
    const pages = await Promise.all([page(big, "load-d"), page(big, "load-e"), page(big, "load-f")]);
    const pageBusy = pages.filter((r) => r.status === 503);
    expect(pageBusy.length).toBe(1);
    expect(Number(pageBusy[0]!.retryAfter)).toBeGreaterThan(0);
    expect(pageBusy[0]!.text).toMatch(/busy with other solves/);
    expect(pages.filter((r) => r.status === 302 && r.location?.startsWith("/problems/load-")).length).toBe(2);
    // A compile error found on the thread is reported at its field with its JSON path.
    const bad = await saveJson("load-bad", big.replace('"sin(s1) - s2', '"sin(s1 - s2'));
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body.errors)).toMatch(/dynamics/);
  }, 240_000);
});
