/**
 * The shard plan of a suite on this checkout and machine class: expands the suite's cases as a
 * run would, then asks app/models/shard-plans.server.ts for the frozen plan (made from this
 * database's history of the class the first time).
 */
import path from "node:path";
import type { Db } from "../../app/db/client.server";
import { shardPlanFor } from "../../app/models/shard-plans.server";
import type { ShardPlan } from "../../app/runs/shards";
import { problemLibraryFor } from "../../app/models/library.server";
import { expandCases, suitePath } from "../../app/runs/suite";
import { loadSuiteWithChanges } from "../../app/models/suite-changes.server";
import type { CaseSpec } from "../../app/runs/types";
import { machineInfo, machineKey } from "./machine";


/** The class timings are compared within: the runner's label, else this machine's key. */
export function machineClassOf(label: string | undefined | null): string {
  return label ?? machineKey(machineInfo());
}

/**
 * The machine key a run is stored and compared under: with a class label, `class:<label>` (every
 * runner of the class compares with every other), else the fingerprint's key.
 */
export function runMachineKey(label: string | undefined | null): string {
  return label ? `class:${label}` : machineKey(machineInfo());
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
  const loaded = loadSuiteWithChanges(db, suitePath(suite, dir));
  const cases = expandCases(loaded.definition, problemLibraryFor(db, dir));
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
