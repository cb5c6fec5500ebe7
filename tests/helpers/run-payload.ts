/**
 * One recorded case of pika-rover-dash (trapezoidal) as an upload payload carries it
 * (format arcwatch-run/1, app/runs/payload.ts): invented numbers for API tests, never results.
 */
import type { RunPayload } from "~/runs/payload";

type CaseRecord = RunPayload["cases"][number];

export function pikaCase(intervals: number, overrides: Partial<CaseRecord> = {}): CaseRecord {
  return {
    caseKey: `pika-rover-dash/trapezoidal/${intervals}`,
    problemId: "pika-rover-dash",
    problemVersionHash: "test-version",
    scheme: "trapezoidal",
    intervals,
    degree: null,
    status: "optimal",
    objective: 1.5,
    objectiveErrorAbs: 1e-6,
    objectiveErrorRel: 1e-6,
    finalTime: 2,
    finalTimeError: null,
    stateError: 1e-5,
    controlError: 1e-3,
    resimMiss: 1e-7,
    constraintViolation: 1e-10,
    iterations: 12,
    medianSeconds: 0.01,
    meanSeconds: 0.01,
    stddevSeconds: 0.001,
    minSeconds: 0.009,
    samples: [0.009, 0.01, 0.011],
    message: null,
    ...overrides,
  };
}

/** The `run` part of an upload payload: invented test metadata, one minute of a 2026-11-01 morning. */
export function runHeader(id: string, commitHash: string, branch: string, commitSubject: string): RunPayload["run"] {
  return {
    id,
    commitHash,
    branch,
    dirty: false,
    commitSubject,
    commitAuthor: "CI <ci@arcwatch.test>",
    commitDate: new Date("2026-11-01T10:00:00Z").toISOString(),
    machine: { cpuModel: "Test CPU", cores: 2 },
    machineKey: "test-machine",
    calibrationSeconds: 0.01,
    startedAt: new Date("2026-11-01T10:01:00Z").toISOString(),
    finishedAt: new Date("2026-11-01T10:02:00Z").toISOString(),
    status: "complete",
    solverLabel: null,
    externalRepo: null,
  };
}
