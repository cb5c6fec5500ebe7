import { defineConfig } from "drizzle-kit";

// Migrations are generated from app/db/schema.ts with `npx drizzle-kit generate` and applied
// at start-up by app/db/migrate.server.ts (drizzle-kit migrate would not create the folder).
export default defineConfig({
  dialect: "sqlite",
  schema: "./app/db/schema.ts",
  out: "./drizzle",
  dbCredentials: { url: process.env.ARCWATCH_DB ?? "./data/arcwatch.db" },
  strict: true,
  verbose: true,
});
