import type Database from "better-sqlite3";

/**
 * This database's own random id (report_cache_state, made once by migration 0008). Caches in the
 * process key on it rather than on the file name, which two databases can share (`:memory:`, a file
 * restored in place).
 */
export function databaseIdOf(sqlite: Database.Database): string {
  return (sqlite.prepare("select database_id from report_cache_state where id = 1").pluck().get() as string | undefined) ?? sqlite.name;
}
