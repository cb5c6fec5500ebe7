/**
 * The shard plan of a suite on this checkout and machine class: expands the suite's cases as a
 * run would, then asks app/models/shard-plans.server.ts for the frozen plan (made from this
 * database's history of the class the first time).
 */
import path from "node:path";
import type { Db } from "../../app/db/client.server";
import { shardPlanFor } from "../../app/models/shard-plans.server";
import type { ShardPlan } from "../../app/runs/shards";
import { runnerLibraryDir, uploadedProblemsDirFor } from "./library-dir";
import { machineInfo, machineKey } from "./machine";
import { expandCases, loadSuite, suitePath } from "./suite";
import type { CaseSpec } from "./types";

/** A runner-set machine class: what CI systems allow in a runner label, kept short. */
export const MACHINE_CLASS_PATTERN = /^[A-Za-z0-9._-]{1,64}$/;

/** The class timings are compared within: the runner's label, else this machine's key. */
export function machineClassOf(label: string | undefined | null): string {
  return label ?? machineKey(machineInfo());
}

export interface SuiteShardPlan {
  suiteName: string;
  contentHash: string;
  machineClass: string;
  cases: CaseSpec[];
  plan: ShardPlan & { frozenAt: Date; reused: boolean };
}

export function shardPlanForSuite(db: Db, suite: string, count: number, machineClassLabel?: string | null, root = process.cwd()): SuiteShardPlan {
  const dir = path.resolve(root);
  const loaded = loadSuite(suitePath(suite, dir));
  const cases = expandCases(loaded.definition, runnerLibraryDir(dir, uploadedProblemsDirFor(db.$client.name)));
  const machineClass = machineClassOf(machineClassLabel);
  const plan = shardPlanFor(db, {
    suiteContentHash: loaded.contentHash,
    cases,
    machineClass,
    count,
    solvesPerCase: loaded.definition.warmup + loaded.definition.repeats,
  });
  return { suiteName: loaded.definition.name, contentHash: loaded.contentHash, machineClass, cases, plan };
}
