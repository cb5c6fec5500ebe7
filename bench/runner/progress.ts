/**
 * Progress on stderr: cases done/total, elapsed time, an estimate of the time left (mean time per
 * finished case, wall clock, × cases left) and the case running now. On a terminal the bar is
 * redrawn in place; otherwise (CI logs) one line is printed per finished case. The same facts go
 * to `events` as JSON lines (app/runs/events.ts) for programs such as the job worker.
 */
import { formatRunEvent, type RunEvent } from "../../app/runs/events";

/** Where machine-readable events go (one line per call). */
export interface ProgressEvents {
  write(line: string): void;
}
export function formatDuration(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return "--:--";
  const s = Math.round(seconds);
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  const r = s % 60;
  return h > 0 ? `${h}:${String(m).padStart(2, "0")}:${String(r).padStart(2, "0")}` : `${m}:${String(r).padStart(2, "0")}`;
}

export class Progress {
  private done = 0;
  private readonly started = Date.now();
  private readonly running = new Set<string>();
  private readonly tty: boolean;
  constructor(
    private readonly total: number,
    private readonly out: NodeJS.WriteStream | null = process.stderr,
    private readonly events: ProgressEvents | null = null,
  ) {
    this.tty = !!out?.isTTY;
  }
  private emit(e: RunEvent): void {
    try {
      this.events?.write(formatRunEvent(e));
    } catch {
      /* a reader that went away must not stop the run */
    }
  }
  private elapsed(): number {
    return (Date.now() - this.started) / 1000;
  }
  /** The run exists: its id and the case keys in order. */
  begin(runId: string, cases: string[]): void {
    this.emit({ event: "begin", runId, cases, done: this.done, total: this.total });
  }
  start(key: string): void {
    this.running.add(key);
    this.emit({ event: "start", key, running: [...this.running], done: this.done, total: this.total });
    this.draw();
  }
  finish(key: string, status: string): void {
    this.running.delete(key);
    this.done++;
    const elapsed = this.elapsed();
    this.emit({ event: "finish", key, status, running: [...this.running], done: this.done, total: this.total, elapsedSeconds: elapsed, etaSeconds: this.done > 0 ? (elapsed / this.done) * (this.total - this.done) : null });
    if (!this.tty && this.out) this.out.write(`${this.line()}  ${key}: ${status}\n`);
    this.draw();
  }
  line(): string {
    const width = 24;
    const filled = this.total ? Math.round((this.done / this.total) * width) : width;
    const elapsed = (Date.now() - this.started) / 1000;
    const eta = this.done > 0 ? (elapsed / this.done) * (this.total - this.done) : NaN;
    return `[${"#".repeat(filled)}${".".repeat(width - filled)}] ${this.done}/${this.total}  elapsed ${formatDuration(elapsed)}  eta ${formatDuration(eta)}`;
  }
  private draw(): void {
    if (!this.tty || !this.out) return;
    const current = [...this.running].join(", ");
    const text = `${this.line()}  ${current}`.slice(0, Math.max(20, (this.out.columns ?? 120) - 1));
    this.out.write(`\r\x1b[2K${text}`);
  }
  end(): void {
    this.emit({ event: "end", done: this.done, total: this.total, elapsedSeconds: this.elapsed() });
    if (this.tty && this.out) this.out.write("\r\x1b[2K");
  }
}
