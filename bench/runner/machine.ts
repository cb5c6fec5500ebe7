/**
 * Machine fingerprint and the calibration workload.
 *
 * Fingerprint: CPU model, logical cores, total memory, OS, architecture and Node version
 * (never the host name). `machineKey` hashes the fields that make timings comparable (CPU model,
 * cores, OS platform, architecture, Node major.minor); baselines are looked up by it.
 *
 * Calibration: a fixed numeric kernel — C = A·B for 160×160 dense Float64Array matrices with
 * deterministic entries — timed in batches before and after the suite (run level) and, shorter,
 * interleaved with each case's timed repeats (case level, `CaseCalibration`). A case time divided by
 * the calibration time measured beside it is far less sensitive to how busy the machine was
 * than the raw time (on a shared machine the run-level figure moved 3× within one run).
 */
import os from "node:os";
import { sha256 } from "../../app/runs/suite";
import { median } from "../../app/engine/stats/summary";

export interface MachineInfo {
  cpuModel: string;
  cores: number;
  memoryGb: number;
  platform: string;
  release: string;
  arch: string;
  node: string;
}

export function machineInfo(): MachineInfo {
  const cpus = os.cpus();
  return {
    cpuModel: (cpus[0]?.model ?? "unknown").trim(),
    cores: cpus.length,
    memoryGb: Math.round((os.totalmem() / 2 ** 30) * 10) / 10,
    platform: os.platform(),
    release: os.release(),
    arch: os.arch(),
    node: process.versions.node,
  };
}

export function machineKey(m: MachineInfo): string {
  const nodeMinor = m.node.split(".").slice(0, 2).join(".");
  return sha256([m.cpuModel, m.cores, m.platform, m.arch, nodeMinor].join("|"));
}

const N = 160; // matrix order of the calibration kernel

/** One C = A·B (i-k-j loop order) on caller-owned buffers; returns a checksum so it is not optimised away. */
function multiply(a: Float64Array, b: Float64Array, c: Float64Array): number {
  c.fill(0);
  for (let i = 0; i < N; i++) {
    for (let k = 0; k < N; k++) {
      const aik = a[i * N + k];
      const row = k * N;
      const out = i * N;
      for (let j = 0; j < N; j++) c[out + j] += aik * b[row + j];
    }
  }
  return c[(N * N) >> 1];
}

export interface Calibration {
  /** Median seconds of one 160×160 multiply over 5 timed batches. */
  seconds: number;
  samples: number[];
  kernel: string;
}

function operands(): { a: Float64Array; b: Float64Array; c: Float64Array } {
  const a = new Float64Array(N * N);
  const b = new Float64Array(N * N);
  const c = new Float64Array(N * N);
  for (let i = 0; i < N * N; i++) {
    a[i] = ((i * 7919) % 1000) / 1000 - 0.5;
    b[i] = ((i * 104729) % 1000) / 1000 - 0.5;
  }
  return { a, b, c };
}

/**
 * Calibration measured beside a case: one untimed warm-up multiply at creation (and a ~50 ms
 * warm-up the first time in a thread, so the kernel is compiled before anything is timed), then
 * `tick()` times one multiply and keeps it. The case worker calls `tick()` after every timed
 * repeat (tinybench afterEach hook, outside the timed region), so the calibration sees the same
 * machine load as the samples it normalises; `seconds()` is the median of the ticks.
 */
let kernelWarm = false;
export class CaseCalibration {
  private readonly ops = operands();
  private readonly ticks: number[] = [];
  private sink = 0;
  constructor() {
    const t = performance.now();
    do this.sink += multiply(this.ops.a, this.ops.b, this.ops.c);
    while (!kernelWarm && performance.now() - t < 50);
    kernelWarm = true;
  }
  tick(): void {
    const t = performance.now();
    this.sink += multiply(this.ops.a, this.ops.b, this.ops.c);
    this.ticks.push((performance.now() - t) / 1000);
  }
  seconds(): number | null {
    if (!Number.isFinite(this.sink)) throw new Error("calibration kernel produced a non-finite checksum");
    return this.ticks.length ? median(this.ticks) : null;
  }
}

export function calibrate(): Calibration {
  const { a, b, c } = operands();
  let sink = 0;
  // Warm up and size a batch of about 0.1 s.
  let t = performance.now();
  let reps = 0;
  while (performance.now() - t < 50) {
    sink += multiply(a, b, c);
    reps++;
  }
  const batch = Math.max(1, Math.round(reps * 2));
  const samples: number[] = [];
  for (let s = 0; s < 5; s++) {
    t = performance.now();
    for (let r = 0; r < batch; r++) sink += multiply(a, b, c);
    samples.push((performance.now() - t) / 1000 / batch);
  }
  if (!Number.isFinite(sink)) throw new Error("calibration kernel produced a non-finite checksum");
  return { seconds: median(samples), samples, kernel: `dense ${N}x${N} matrix product, median of 5 batches` };
}
