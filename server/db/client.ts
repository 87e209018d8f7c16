import fs from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";
import { drizzle, type BetterSQLite3Database } from "drizzle-orm/better-sqlite3";
import * as schema from "./schema";

export type Db = BetterSQLite3Database<typeof schema> & { $client: Database.Database };

/**
 * Opens the SQLite file with the settings every connection needs: WAL (readers never wait for the
 * writer), foreign keys enforced, and a busy timeout so a second writer waits instead of failing.
 */
export function openDatabase(file: string): Db {
  if (file !== ":memory:") fs.mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
  const sqlite = new Database(file);
  sqlite.pragma("journal_mode = WAL");
  sqlite.pragma("foreign_keys = ON");
  sqlite.pragma("busy_timeout = 5000");
  sqlite.pragma("synchronous = NORMAL");
  // 64 MB of page cache: bulk imports touch several indexes per row and thrash the 2 MB default.
  sqlite.pragma("cache_size = -65536");
  sqlite.pragma("temp_store = MEMORY");
  return drizzle(sqlite, { schema }) as Db;
}

export { schema };
