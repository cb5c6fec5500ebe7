/**
 * Source of an executor module (`createExecutor`) standing in for the real solver in
 * timing tests: its work per solve is `work` × intervals floating-point steps, its answers fixed.
 */
export function standInExecutor(work: number, versionHash: string): string {
  return `export const createExecutor = () => ({
  prepare(spec: { problemId: string; scheme: string; intervals: number }) {
    return {
      solve() {
        let acc = 0;
        for (let i = 1; i <= ${work} * spec.intervals; i++) acc += Math.sin(i) / i;
        return { problemId: spec.problemId, versionHash: "${versionHash}", scheme: spec.scheme, intervals: spec.intervals, status: "optimal", message: null,
          objective: 1 + acc * 0, finalTime: 1, iterations: 10, constraintViolation: 0,
          errors: { objectiveAbs: 0, objectiveRel: 0, finalTimeAbs: 0, stateMax: 0, controlMax: 0 } };
      },
    };
  },
});
`;
}
