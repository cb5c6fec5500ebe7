/**
 * Machine-readable progress of a run: one JSON object per line ("JSON lines"), written by the
 * runner to the file descriptor named by ARCWATCH_EVENTS_FD (the job worker opens it as a pipe
 * beside stdout and stderr) and read back by the job worker. The terminal progress bar is for
 * people and is never parsed.
 */
import { z } from "zod";

/** Environment variable naming the file descriptor the runner writes its events to. */
export const RUN_EVENTS_FD_ENV = "ARCWATCH_EVENTS_FD";

const base = { done: z.number().int().min(0), total: z.number().int().min(0) };

export const runEventSchema = z.discriminatedUnion("event", [
  /** The run row exists; `cases` are the case keys in the order they will be started. */
  z.object({ event: z.literal("begin"), runId: z.string(), cases: z.array(z.string()), ...base }),
  z.object({ event: z.literal("start"), key: z.string(), running: z.array(z.string()), ...base }),
  z.object({ event: z.literal("finish"), key: z.string(), status: z.string(), running: z.array(z.string()), elapsedSeconds: z.number(), etaSeconds: z.number().nullable(), ...base }),
  z.object({ event: z.literal("end"), elapsedSeconds: z.number(), ...base }),
  /** Interleaved A/B (bench --ab): one trial of one side of one block finished. */
  z.object({ event: z.literal("trial"), key: z.string(), block: z.number().int().min(0), side: z.enum(["A", "B"]), ...base }),
]);
export type RunEvent = z.infer<typeof runEventSchema>;

/** One event as a line. */
export const formatRunEvent = (e: RunEvent): string => `${JSON.stringify(e)}\n`;

/** Parses one line; null for anything that is not an event (blank, partial, foreign). */
export function parseRunEvent(line: string): RunEvent | null {
  const text = line.trim();
  if (!text.startsWith("{")) return null;
  try {
    const r = runEventSchema.safeParse(JSON.parse(text));
    return r.success ? r.data : null;
  } catch {
    return null;
  }
}
