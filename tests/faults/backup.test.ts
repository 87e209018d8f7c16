/**
 * `npm run backup` (scripts/backup.ts) run for real as a child process against a real SQLite file in
 * WAL mode that another connection keeps writing to, as the running app would.
 */
import { spawn } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import Database from "better-sqlite3";
import { afterEach, describe, expect, it } from "vitest";
import { openDatabase } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { REPO_ROOT } from "../helpers/server-process";

const TSX = pathToFileURL(path.join(REPO_ROOT, "node_modules/tsx/dist/loader.mjs")).href;
const SCRIPT = path.join(REPO_ROOT, "scripts/backup.ts");
const MIGRATIONS = (JSON.parse(fs.readFileSync(path.join(REPO_ROOT, "drizzle/meta/_journal.json"), "utf8")) as { entries: unknown[] }).entries.length;

let dirs: string[] = [];
afterEach(() => {
  for (const d of dirs) fs.rmSync(d, { recursive: true, force: true });
  dirs = [];
});
const tempDir = () => {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-backup-"));
  dirs.push(d);
  return d;
};

/** Runs the backup script; only PATH and HOME come from the test's environment. */
function runBackup(env: Record<string, string>, cwd = REPO_ROOT): Promise<{ code: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ["--import", TSX, SCRIPT], {
      cwd,
      env: { PATH: process.env.PATH ?? "/usr/bin:/bin", HOME: process.env.HOME ?? os.tmpdir(), ...env },
      stdio: ["ignore", "pipe", "pipe"],
    });
    let stdout = "";
    let stderr = "";
    child.stdout.on("data", (c: Buffer) => (stdout += c.toString()));
    child.stderr.on("data", (c: Buffer) => (stderr += c.toString()));
    // A backup that never finishes must not outlive the test.
    const guard = setTimeout(() => child.kill("SIGKILL"), 45_000);
    child.once("error", reject);
    child.once("exit", (code) => {
      clearTimeout(guard);
      resolve({ code, stdout, stderr });
    });
  });
}

const lastLine = (s: string) => s.trimEnd().split("\n").at(-1)!;
const BATCH = 10;
const payload = JSON.stringify({ note: "invented test row ".repeat(12) });

/** A migrated app database with `rows` audit rows (whole batches), in WAL mode like the app's. */
function makeDatabase(file: string, rows: number) {
  const db = openDatabase(file);
  // Nothing is checkpointed into the main file while the test runs: every committed row since the
  // start lives in the WAL, so a copy that is not WAL-aware (a plain file copy) would miss them.
  db.$client.pragma("wal_autocheckpoint = 0");
  runMigrations(db);
  const ins = db.$client.prepare("insert into audit_log (at, actor, action, entity, entity_id, after) values (?, 'test', 'test.write', 'test', ?, ?)");
  db.$client.transaction(() => {
    for (let i = 0; i < rows; i++) ins.run(Date.now(), String(i), payload);
  })();
  return { db, ins };
}

const tables = (db: Database.Database) => db.prepare("select name from sqlite_schema where type = 'table' order by name").pluck().all() as string[];

describe("npm run backup", () => {
  it("when the database is being written to, then the copy is whole, consistent, a snapshot between the counts before and after, and opens as the app's database", async () => {
    const dir = tempDir();
    const file = path.join(dir, "app.db");
    const backupDir = path.join(dir, "nightly");
    const { db, ins } = makeDatabase(file, 60_000);
    expect(db.$client.pragma("journal_mode", { simple: true })).toBe("wal");
    const count = () => db.$client.prepare("select count(*) from audit_log").pluck().get() as number;

    // The writer: one transaction of BATCH rows every millisecond or so, for as long as the backup runs.
    const batch = db.$client.transaction(() => {
      for (let i = 0; i < BATCH; i++) ins.run(Date.now(), "live", payload);
    });
    const writer = setInterval(batch, 1);
    const before = count();
    let result: Awaited<ReturnType<typeof runBackup>>;
    try {
      result = await runBackup({ DATABASE_FILE: file, BACKUP_DIR: backupDir });
    } finally {
      clearInterval(writer);
    }
    const after = count();
    expect(result.code, result.stderr).toBe(0);
    expect(after).toBeGreaterThan(before); // the writer really ran during the backup

    const copyFile = lastLine(result.stdout);
    expect(path.dirname(copyFile)).toBe(backupDir);
    expect(path.basename(copyFile)).toMatch(/^strandsight-\d{8}-\d{6}(-\d+)?\.db$/);
    expect(fs.existsSync(copyFile)).toBe(true);
    expect(fs.readdirSync(backupDir)).toEqual([path.basename(copyFile)]); // no temporary file left

    const copy = new Database(copyFile, { fileMustExist: true });
    try {
      expect(copy.prepare("pragma integrity_check").pluck().all()).toEqual(["ok"]);
      const n = copy.prepare("select count(*) from audit_log").pluck().get() as number;
      expect(n).toBeGreaterThanOrEqual(before);
      expect(n).toBeLessThanOrEqual(after);
      // One moment's database: whole write transactions only, and no row missing below the newest.
      expect(n % BATCH).toBe(0);
      expect(copy.prepare("select max(id) from audit_log").pluck().get()).toBe(n);
      expect(tables(copy)).toEqual(tables(db.$client));
    } finally {
      copy.close();
    }
    // The app opens the copy with its own settings, and its migrations find nothing left to apply.
    const app = openDatabase(copyFile);
    try {
      const applied = () => app.$client.prepare("select count(*) from __drizzle_migrations").pluck().get() as number;
      expect(applied()).toBe(MIGRATIONS);
      runMigrations(app);
      expect(applied()).toBe(MIGRATIONS);
      expect(app.$client.prepare("select count(*) from heats").pluck().get()).toBe(0);
    } finally {
      app.$client.close();
    }
    // The live database is untouched and still sound.
    expect(db.$client.prepare("pragma integrity_check").pluck().all()).toEqual(["ok"]);
    db.$client.close();
  }, 60_000);

  it("when DATABASE_FILE comes from ./.env and BACKUP_DIR is unset, then the copy goes to ./backups", async () => {
    const dir = tempDir();
    const file = path.join(dir, "data", "plant.db");
    const { db } = makeDatabase(file, 50);
    db.$client.close();
    fs.writeFileSync(path.join(dir, ".env"), `# as the server reads it\nDATABASE_FILE=./data/plant.db\nLOG_LEVEL=info\n`);
    const result = await runBackup({}, dir);
    expect(result.code, result.stderr).toBe(0);
    const copyFile = lastLine(result.stdout);
    expect(path.dirname(copyFile)).toBe(path.join(fs.realpathSync(dir), "backups"));
    const copy = new Database(copyFile, { fileMustExist: true, readonly: true });
    expect(copy.prepare("select count(*) from audit_log").pluck().get()).toBe(50);
    copy.close();
    // Nothing was written beside the database (no generated session secret, no leftover WAL files).
    expect(fs.readdirSync(path.join(dir, "data"))).toEqual(["plant.db"]);
  }, 60_000);

  it("when the database file does not exist, then exit 1 with a message naming it, and nothing is created", async () => {
    const dir = tempDir();
    const file = path.join(dir, "missing", "app.db");
    const backupDir = path.join(dir, "backups");
    const result = await runBackup({ DATABASE_FILE: file, BACKUP_DIR: backupDir });
    expect(result.code).toBe(1);
    expect(result.stderr).toContain(`The database file ${file} does not exist`);
    expect(result.stderr).toContain("Nothing was backed up");
    expect(result.stdout).toBe("");
    expect(fs.readdirSync(dir)).toEqual([]); // neither an empty database nor a backup folder
  }, 60_000);

  it("when DATABASE_FILE is not a SQLite database, then exit 1 with a message, the file is unchanged and no copy is left", async () => {
    const dir = tempDir();
    const file = path.join(dir, "app.db");
    const text = "heat_no,caster\nNOT-A-DATABASE,CC2\n";
    fs.writeFileSync(file, text);
    const backupDir = path.join(dir, "backups");
    const result = await runBackup({ DATABASE_FILE: file, BACKUP_DIR: backupDir });
    expect(result.code).toBe(1);
    expect(result.stderr).toContain(`${file} could not be read as a SQLite database`);
    expect(fs.readFileSync(file, "utf8")).toBe(text);
    expect(fs.existsSync(backupDir) ? fs.readdirSync(backupDir) : []).toEqual([]);
  }, 60_000);
});
