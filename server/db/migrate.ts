import path from "node:path";
import { fileURLToPath } from "node:url";
import { migrate } from "drizzle-orm/better-sqlite3/migrator";
import { databaseStartupError, type Db } from "./client";

const here = path.dirname(fileURLToPath(import.meta.url));
export const MIGRATIONS_FOLDER = path.resolve(here, "../../drizzle");

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
