/**
 * Seeding: fills an empty database with what a first-time visitor needs to look around.
 *
 * `seed(db)` runs every entry of `SEEDERS` in order, then the `extra` seeders its caller passes.
 * Each seeder decides for itself whether its data is missing (it must be idempotent: `npm start`
 * calls `seed` on every start). Demo results (runs, cases, regressions) need the benchmark runner,
 * which sits above the app, so scripts/seed.ts passes them in (scripts/demo-seed.ts); mark such
 * runs `isDemo: true`.
 */
import type { Db } from "./client.server";
import type { Role } from "./schema";
import { countUsers, createUser } from "~/models/users.server";

export interface Seeder {
  name: string;
  run(db: Db, log: (line: string) => void): Promise<void> | void;
}

/** Demo-only accounts, listed in README.md. Never use these passwords for real accounts. */
export const DEMO_ACCOUNTS: readonly { role: Role; email: string; name: string; password: string }[] = [
  { role: "viewer", email: "viewer@arcwatch.test", name: "Demo Viewer", password: "viewer-demo-pass" },
  { role: "engineer", email: "engineer@arcwatch.test", name: "Demo Engineer", password: "engineer-demo-pass" },
  { role: "admin", email: "admin@arcwatch.test", name: "Demo Admin", password: "admin-demo-pass" },
];

export const demoAccounts: Seeder = {
  name: "demo accounts",
  async run(db, log) {
    if (countUsers(db) > 0) return;
    for (const a of DEMO_ACCOUNTS) await createUser(db, a);
    log(`created ${DEMO_ACCOUNTS.length} demo accounts (${DEMO_ACCOUNTS.map((a) => a.email).join(", ")})`);
  },
};

/** Seeders in the order they run. Add new ones here. */
export const SEEDERS: Seeder[] = [demoAccounts];

export async function seed(db: Db, log: (line: string) => void = () => {}, extra: Seeder[] = []): Promise<void> {
  for (const s of [...SEEDERS, ...extra]) await s.run(db, (line) => log(`[seed] ${s.name}: ${line}`));
}
