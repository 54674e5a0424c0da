import { defineConfig } from "drizzle-kit";

// Used by `npm run db:generate` only: migrations are applied by the app itself at start
// (server/db/migrate.ts), so no database URL is needed here.
export default defineConfig({
  dialect: "postgresql",
  schema: "./server/db/schema.ts",
  out: "./drizzle",
});
