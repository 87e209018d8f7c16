/**
 * Start-up failures a restart cannot fix — the port taken, a database that cannot be written, a bad
 * setting — end with a plain message (no stack trace) and exit 78, and the supervisor does not start
 * the server again: it stops with the same code. Real processes, a real port, real SQLite files.
 */
import fs from "node:fs";
import net from "node:net";
import path from "node:path";
import { afterEach, describe, expect, it } from "vitest";
import { openDatabase } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { disposeServer, launchServer, newServerFiles, type ServerFiles, type ServerProcess } from "../helpers/server-process";

const EXIT_CANNOT_START = 78;

let servers: ServerProcess[] = [];
const dirs: string[] = [];
afterEach(async () => {
  for (const s of servers) await disposeServer(s);
  servers = [];
  for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
});

/** Runs the start under the supervisor (as `npm start` does) to its end. */
async function startToExit(opts: Parameters<typeof launchServer>[0]) {
  const srv = await launchServer({ entry: "supervisor", ...opts });
  servers.push(srv);
  const exit = await srv.waitExit(90_000);
  return { exit, out: srv.output(), starts: srv.serverPids().length };
}

/** A migrated database, closed, then marked in its header as written by a newer SQLite ("write version" 3). */
function readOnlyDatabase(files: ServerFiles) {
  const db = openDatabase(files.databaseFile);
  runMigrations(db);
  db.$client.close();
  // SQLite's file format: byte 18 is the write version; above 2 the file "must be treated as
  // read-only" by this SQLite. Unlike chmod, this holds for root too, and it is SQLite's own refusal
  // (SQLITE_READONLY), the same error a read-only mount or a file owned by another user gives.
  const fd = fs.openSync(files.databaseFile, "r+");
  fs.writeSync(fd, Buffer.from([3]), 0, 1, 18);
  fs.closeSync(fd);
}

describe("start-up failures a restart cannot fix", () => {
  it("when the port is taken, then the server says which port and how to choose another, exits 78, and the supervisor does not restart it", async () => {
    const other = net.createServer();
    await new Promise<void>((r) => other.listen(0, "127.0.0.1", r));
    const port = (other.address() as net.AddressInfo).port;
    try {
      const files = newServerFiles();
      dirs.push(files.dir);
      const { exit, out, starts } = await startToExit({ files, seed: false, port });
      expect(exit, out).toEqual({ code: EXIT_CANNOT_START, signal: null });
      expect(out).toContain(`Strandsight cannot start: port ${port} on 127.0.0.1 is already in use by another program (perhaps another copy of Strandsight).`);
      expect(out).toContain(`Stop that program, or choose a free port for Strandsight with PORT, e.g. PORT=${port + 1} in .env or in the environment.`);
      expect(out).not.toContain("Strandsight is running");
      expect(out).not.toMatch(/\n\s+at /); // no stack trace
      expect(starts).toBe(1);
      expect(out).toContain(
        `strandsight supervisor: server cannot start (exit ${EXIT_CANNOT_START}; the reason is printed above). Not restarting: fix the cause and start again.`,
      );
    } finally {
      await new Promise<void>((r) => other.close(() => r()));
    }
  }, 120_000);

  it("when the database file can be read but not written (even as root), then the message names the file and what to check, exit 78, no restart, and the file is unchanged", async () => {
    const files = newServerFiles();
    dirs.push(files.dir);
    readOnlyDatabase(files);
    const before = fs.readFileSync(files.databaseFile);
    const { exit, out, starts } = await startToExit({ files, seed: false });
    expect(exit, out).toEqual({ code: EXIT_CANNOT_START, signal: null });
    expect(out).toContain(
      `Strandsight cannot start: the database ${files.databaseFile} can be read but not written (SQLITE_READONLY: attempt to write a readonly database).`,
    );
    expect(out).toContain("Check that the file and its folder belong to the user the app runs as");
    expect(out).toContain("that the disk is mounted read-write and not full, and that DATABASE_FILE points where you expect.");
    expect(out).not.toContain("Strandsight is running");
    expect(out).not.toMatch(/\n\s+at /);
    expect(starts).toBe(1);
    expect(fs.readFileSync(files.databaseFile).equals(before)).toBe(true);
  }, 120_000);

  it("when the database is new and cannot be written, then the migrations stop with the same plain message", async () => {
    const files = newServerFiles();
    dirs.push(files.dir);
    // An empty SQLite database (no tables yet) in WAL mode, marked read-only as above.
    const db = openDatabase(files.databaseFile);
    db.$client.exec("create table plant_note (text text)");
    db.$client.close();
    const fd = fs.openSync(files.databaseFile, "r+");
    fs.writeSync(fd, Buffer.from([3]), 0, 1, 18);
    fs.closeSync(fd);
    const { exit, out, starts } = await startToExit({ files, seed: false });
    expect(exit, out).toEqual({ code: EXIT_CANNOT_START, signal: null });
    expect(out).toContain(
      `Strandsight cannot start: the database ${files.databaseFile} can be read but not written (SQLITE_READONLY: attempt to write a readonly database).`,
    );
    expect(out).not.toMatch(/\n\s+at /);
    expect(starts).toBe(1);
  }, 120_000);

  it("when DATABASE_FILE lies under a path that is a file, not a folder, then the message names the path and what to check, exit 78, no restart", async () => {
    const files = newServerFiles();
    dirs.push(files.dir);
    const blocker = path.join(files.dir, "data");
    fs.writeFileSync(blocker, "a file where the data folder should be\n");
    const databaseFile = path.join(blocker, "app.db");
    const { exit, out, starts } = await startToExit({ files: { ...files, databaseFile }, seed: true });
    expect(exit, out).toEqual({ code: EXIT_CANNOT_START, signal: null });
    expect(out).toContain(`Strandsight cannot start: it cannot create or write ${blocker} (a file is in the way where a folder should be, EEXIST).`);
    expect(out).toContain("Check that the folder exists, that it belongs to the user the app runs as (or is writable by it),");
    expect(out).not.toMatch(/\n\s+at /);
    expect(starts).toBe(1);
    expect(fs.readFileSync(blocker, "utf8")).toBe("a file where the data folder should be\n");
  }, 120_000);

  it("when a setting is not valid, then the message names it, exit 78, and the supervisor does not restart", async () => {
    const files = newServerFiles();
    dirs.push(files.dir);
    const { exit, out, starts } = await startToExit({ files, env: { MAIL_POLL_MS: "often" } });
    expect(exit, out).toEqual({ code: EXIT_CANNOT_START, signal: null });
    expect(out).toContain("The configuration is not valid:");
    expect(out).toContain("MAIL_POLL_MS");
    expect(starts).toBe(1);
    expect(fs.existsSync(files.databaseFile)).toBe(false);
  }, 120_000);
});
