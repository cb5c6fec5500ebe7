/**
 * Migrates the database named by ARCWATCH_DB (default ./data/arcwatch.db) and seeds it when
 * empty. Run by scripts/start.mjs (accounts first, the demo results in the background once the
 * server answers); also usable alone: `npx tsx scripts/seed.ts [--accounts-only | --demo-only]`.
 */
import { closeDb, databasePath, getDb } from "~/db/client.server";
import { seed } from "~/db/seed.server";
import { demoSeedWanted } from "~/models/demo-progress.server";

// --accounts-only: migrations and demo accounts (what the server needs to answer);
// --demo-only: the demo results alone (npm start runs these in the background once it serves).
/** Printed by --accounts-only when the demo results are still to be seeded (read by scripts/start.mjs). */
const DEMO_WANTED = "[arcwatch] demo results: wanted";
const accountsOnly = process.argv.includes("--accounts-only");
const demoOnly = process.argv.includes("--demo-only");
const db = getDb(); // applies pending migrations
// the demo seeder loads the benchmark runner: only when it is to run
const demo = async () => (await import("./demo-seed")).demoResults;
if (demoOnly) {
  const d = await demo();
  await d.run(db, (line) => console.log(`[seed] ${d.name}: ${line}`));
} else if (accountsOnly) {
  await seed(db, (line) => console.log(line));
  if (demoSeedWanted(db)) console.log(DEMO_WANTED);
} else await seed(db, (line) => console.log(line), [await demo()]);
console.log(`[arcwatch] database ready: ${databasePath()}`);
closeDb();
