import fs from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";
import { drizzle, type BetterSQLite3Database } from "drizzle-orm/better-sqlite3";
import { describePathError, StartupError } from "../lib/startup-error";
import * as schema from "./schema";

export type Db = BetterSQLite3Database<typeof schema> & { $client: Database.Database };

/**
 * Opens the SQLite file with the settings every connection needs: WAL (readers never wait for the
 * writer), foreign keys enforced, and a busy timeout so a second writer waits instead of failing.
 * A file or folder that cannot be opened or created is a StartupError with a plain message.
 *
 * `cacheMb`: SQLite's page cache of this connection, held in the process's memory once filled. 64 MB
 * by default: bulk imports touch several indexes per row and thrash SQLite's own 2 MB default. The
 * report thread asks for less (report-thread-worker.ts): it reads its slab data from its own columns,
 * and at five million slabs a 64 MB cache filled by its few queries was 57 MB of the server's RSS.
 */
export function openDatabase(file: string, { cacheMb = 64 }: { cacheMb?: number } = {}): Db {
  if (file !== ":memory:") {
    try {
      fs.mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
    } catch (err) {
      const message = describePathError(err);
      throw message ? new StartupError(message, { cause: err }) : err;
    }
  }
  let sqlite: Database.Database | undefined;
  try {
    sqlite = new Database(file);
    sqlite.pragma("journal_mode = WAL");
    sqlite.pragma("foreign_keys = ON");
    sqlite.pragma("busy_timeout = 5000");
    sqlite.pragma("synchronous = NORMAL");
    sqlite.pragma(`cache_size = ${-Math.round(cacheMb * 1024)}`);
    sqlite.pragma("temp_store = MEMORY");
  } catch (err) {
    sqlite?.close();
    throw databaseStartupError(file, err) ?? err;
  }
  return drizzle(sqlite, { schema }) as Db;
}

/**
 * A read-only connection to an existing database file (a thread that only reads, such as a
 * screening's helper): it creates nothing and changes no setting of the file.
 */
export function openDatabaseReadOnly(file: string): Db {
  const sqlite = new Database(file, { readonly: true, fileMustExist: true });
  sqlite.pragma("busy_timeout = 5000");
  return drizzle(sqlite, { schema }) as Db;
}

/**
 * Fails at start, with a plain message, when the database cannot be written. SQLite opens a file it
 * may not write read-only without a word, and a database already migrated needs no write to start,
 * so without this probe the app would come up and answer every save with an error. The probe is a
 * write of the header's user_version (unchanged) inside a transaction that is rolled back.
 */
export function assertWritable(db: Db, file: string): void {
  const sqlite = db.$client;
  try {
    sqlite.exec("BEGIN IMMEDIATE");
    try {
      const version = Number(sqlite.pragma("user_version", { simple: true }));
      sqlite.pragma(`user_version = ${version}`);
    } finally {
      sqlite.exec("ROLLBACK");
    }
  } catch (err) {
    throw databaseStartupError(file, err) ?? err;
  }
}

/** A StartupError naming the file for SQLite's "cannot open / cannot write" errors, else null. */
export function databaseStartupError(file: string, err: unknown): StartupError | null {
  const code = String((err as { code?: unknown })?.code ?? "");
  const where = file === ":memory:" ? "the in-memory database" : path.resolve(file);
  const detail = `(${code}: ${(err as Error)?.message ?? String(err)})`;
  let first: string;
  if (code.startsWith("SQLITE_READONLY") || code === "SQLITE_PERM") {
    first = `Strandsight cannot start: the database ${where} can be read but not written ${detail}.`;
  } else if (code.startsWith("SQLITE_CANTOPEN")) {
    first = `Strandsight cannot start: the database ${where} cannot be opened or created ${detail}.`;
  } else if (code === "SQLITE_FULL" || code.startsWith("SQLITE_IOERR")) {
    first = `Strandsight cannot start: writing the database ${where} failed ${detail}.`;
  } else if (code === "SQLITE_NOTADB") {
    return new StartupError(
      `Strandsight cannot start: ${where} is not a SQLite database ${detail}.\nCheck DATABASE_FILE; to go back to a backup, see "restoring" in the README.`,
      { cause: err },
    );
  } else {
    return null;
  }
  return new StartupError(
    [
      first,
      "Check that the file and its folder belong to the user the app runs as (SQLite also writes the",
      `-wal and -shm files beside it), that the disk is mounted read-write and not full, and that DATABASE_FILE points where you expect.`,
    ].join("\n"),
    { cause: err },
  );
}

export { schema };
