import path from "node:path";
import { migrate } from "drizzle-orm/better-sqlite3/migrator";
import { databaseStartupError, type Db } from "./client";
import { PROJECT_ROOT } from "../lib/paths";

export const MIGRATIONS_FOLDER = path.join(PROJECT_ROOT, "drizzle");

/**
 * Applies the committed migrations in drizzle/ (idempotent: applied ones are skipped). A database
 * that cannot be written fails with a plain start-up message naming the file.
 */
export function runMigrations(db: Db): void {
  try {
    migrate(db, { migrationsFolder: MIGRATIONS_FOLDER });
  } catch (err) {
    // Drizzle wraps the SQLite error; the code sits on the cause.
    const sqliteErr = (err as { cause?: unknown }).cause ?? err;
    throw databaseStartupError(db.$client.name, sqliteErr) ?? err;
  }
}
