/** Writes problems/<id>/reference.csv for the analytic problems: `npx tsx tests/library/write-analytic-references.ts`. */
import { writeFileSync } from "node:fs";
import { ANALYTIC_CASES, analyticCsv } from "./analytic";

for (const c of ANALYTIC_CASES) {
  writeFileSync(`problems/${c.id}/reference.csv`, analyticCsv(c));
  console.log(`problems/${c.id}/reference.csv`);
}
