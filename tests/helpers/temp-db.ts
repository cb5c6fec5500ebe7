/**
 * A fresh database per test file: call `useTempDatabase()` at the top of the file (before
 * anything calls getDb()). It points ARCWATCH_DB at a new temporary folder and removes it
 * after the file's tests. vitest runs each file in its own process (pool "forks").
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll } from "vitest";

export function useTempDatabase(label = "web"): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), `arcwatch-${label}-`));
  const file = path.join(dir, "arcwatch.db");
  process.env.ARCWATCH_DB = file;
  process.env.SESSION_SECRET ??= "test-only-session-secret-0123456789abcdef";
  afterAll(async () => {
    const { closeDb } = await import("~/db/client.server");
    closeDb();
    fs.rmSync(dir, { recursive: true, force: true });
  });
  return file;
}

/** A same-origin form POST as a browser would send it. */
export function formPost(url: string, fields: Record<string, string>, headers: Record<string, string> = {}): Request {
  const origin = new URL(url).origin;
  return new Request(url, {
    method: "POST",
    body: new URLSearchParams(fields),
    headers: { "Content-Type": "application/x-www-form-urlencoded", Origin: origin, ...headers },
  });
}
