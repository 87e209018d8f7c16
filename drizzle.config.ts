import { defineConfig } from "drizzle-kit";

// `npm run db:generate` writes SQL migrations into drizzle/ from server/db/schema.ts; they are committed
// and applied at start-up by server/db/migrate.ts.
export default defineConfig({
  dialect: "sqlite",
  schema: "./server/db/schema.ts",
  out: "./drizzle",
  dbCredentials: { url: process.env.DATABASE_FILE ?? "./data/app.db" },
});
