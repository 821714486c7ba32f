import { defineConfig } from "drizzle-kit";
import { env } from "./lib/env";

// Used only by `npm run db:generate` (drizzle-kit generate), which writes SQL
// migrations into drizzle/. Migrations are applied by scripts/migrate.ts.
export default defineConfig({
  dialect: "postgresql",
  schema: "./db/schema.ts",
  out: "./drizzle",
  dbCredentials: { url: env.DATABASE_URL },
  strict: true,
});
