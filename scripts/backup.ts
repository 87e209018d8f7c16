/**
 * `npm run backup`: a consistent copy of the live database (DATABASE_FILE, read from the environment
 * and ./.env as the server reads it), taken with SQLite's online backup API while the app keeps
 * running. The copy goes to ./backups (BACKUP_DIR overrides) as strandsight-YYYYMMDD-HHMMSS.db (UTC);
 * the last line printed is its path.
 *
 * The whole database is copied in one backup step, that is inside one read transaction: the copy is
 * the database as it was at one moment, and in WAL mode the app's writers carry on meanwhile. The copy
 * is written under a temporary name, checked, and only then given its final name, so a file named
 * strandsight-….db is always a whole, checked backup.
 */
import fs from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";
import { EnvError, loadDotEnvFile, loadEnv } from "../server/env";

class BackupError extends Error {}

function utcStamp(d: Date): string {
  const p = (n: number) => String(n).padStart(2, "0");
  return `${d.getUTCFullYear()}${p(d.getUTCMonth() + 1)}${p(d.getUTCDate())}-${p(d.getUTCHours())}${p(d.getUTCMinutes())}${p(d.getUTCSeconds())}`;
}

/** strandsight-<stamp>.db, or -2, -3… when a backup of the same second is already there. */
function freeName(dir: string, stamp: string): string {
  for (let i = 1; ; i++) {
    const file = path.join(dir, `strandsight-${stamp}${i === 1 ? "" : `-${i}`}.db`);
    if (!fs.existsSync(file) && !fs.existsSync(`${file}.partial`)) return file;
  }
}

const removeWithSidecars = (file: string) => {
  for (const f of [file, `${file}-wal`, `${file}-shm`, `${file}-journal`]) fs.rmSync(f, { force: true });
};

async function main(): Promise<string> {
  loadDotEnvFile();
  // The same validation as the server's start. Without BETTER_AUTH_SECRET, loadEnv would generate the
  // local session secret and store it beside the database; a backup signs no sessions and writes
  // nothing there, so it passes a stand-in.
  const env = loadEnv({ ...process.env, BETTER_AUTH_SECRET: process.env.BETTER_AUTH_SECRET || "x".repeat(32) });
  if (env.DATABASE_FILE === ":memory:") throw new BackupError("DATABASE_FILE is :memory: — there is no database file to back up.");
  const source = path.resolve(env.DATABASE_FILE);
  const stat = fs.statSync(source, { throwIfNoEntry: false });
  if (!stat) {
    throw new BackupError(
      `The database file ${source} does not exist (DATABASE_FILE=${env.DATABASE_FILE}). Nothing was backed up. Run the backup where the app runs, with the same DATABASE_FILE (or .env).`,
    );
  }
  if (!stat.isFile()) throw new BackupError(`DATABASE_FILE ${source} is not a file. Nothing was backed up.`);

  const dir = path.resolve(process.env.BACKUP_DIR || "backups");
  fs.mkdirSync(dir, { recursive: true });
  const target = freeName(dir, utcStamp(new Date()));
  const partial = `${target}.partial`;

  const t0 = performance.now();
  // Opened read-write although it only reads: a read-only connection cannot remove the -wal/-shm files
  // it had to create when the app is not running, and files left by another user (root running the
  // backup) would lock the app out at its next start.
  const db = new Database(source, { fileMustExist: true, timeout: 10_000 });
  try {
    try {
      db.prepare("select count(*) from sqlite_schema").get();
    } catch (err) {
      throw new BackupError(`${source} could not be read as a SQLite database (${(err as Error).message}). Nothing was backed up.`);
    }
    // A huge page count per step: everything in one step, one snapshot.
    await db.backup(partial, { progress: () => 0x7fffffff });
  } catch (err) {
    removeWithSidecars(partial);
    throw err;
  } finally {
    db.close();
  }

  try {
    const copy = new Database(partial, { fileMustExist: true });
    try {
      const check = copy.prepare("pragma quick_check").pluck().all() as string[];
      if (check.length !== 1 || check[0] !== "ok") throw new BackupError(`The copy failed its check (${check.slice(0, 3).join("; ")}); it was removed.`);
    } finally {
      copy.close();
    }
    fs.renameSync(partial, target);
    const dirFd = fs.openSync(dir, "r");
    try {
      fs.fsyncSync(dirFd);
    } finally {
      fs.closeSync(dirFd);
    }
  } catch (err) {
    removeWithSidecars(partial);
    throw err;
  }

  const mb = fs.statSync(target).size / 1024 / 1024;
  console.log(`Backed up ${source} (${mb.toFixed(1)} MB) in ${((performance.now() - t0) / 1000).toFixed(1)} s to:`);
  return target;
}

main().then(
  (file) => {
    console.log(file);
  },
  (err) => {
    if (err instanceof EnvError || err instanceof BackupError) console.error(err.message);
    else console.error("The backup failed:", err);
    process.exit(1);
  },
);
