/**
 * Migrates the database named by ARCWATCH_DB (default ./data/arcwatch.db) and seeds it when
 * empty. Run by scripts/start.mjs; also usable alone: `npx tsx scripts/seed.ts`.
 */
import { closeDb, databasePath, getDb } from "~/db/client.server";
import { seed } from "~/db/seed.server";
import { demoResults } from "./demo-seed";

const db = getDb(); // applies pending migrations
await seed(db, (line) => console.log(line), [demoResults]);
console.log(`[arcwatch] database ready: ${databasePath()}`);
closeDb();
