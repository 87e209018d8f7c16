/**
 * Issue 14, the start: the real server process listens and answers sign-in and the yard before the
 * reports' slab data are loaded (at any data size: they load after `listen`, in the background);
 * reports answer 503 "warming up" with Retry-After until then. At SIGTERM it writes the report cache
 * snapshot; the next start reads it instead of rebuilding; after a SIGKILL that left the snapshot
 * behind the database, the next start sees that and rebuilds.
 *
 * The load is held at its first read, deterministically, by making the snapshot's path a named pipe
 * (mkfifo): the server's read waits until the test writes to it. The time to listen at 1 and 5
 * million slabs is measured by `npm run bench -- start` (no timed assertions here).
 */
import { execFileSync, spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { afterEach, describe, expect, it } from "vitest";
import { openDatabase } from "../../server/db/client";
import { createResolver } from "../../server/services/conditions.service";
import { disposeServer, launchServer, newServerFiles, startServer, waitFor, type ServerProcess } from "../helpers/server-process";

let servers: ServerProcess[] = [];
afterEach(async () => {
  for (const s of servers) await disposeServer(s);
  servers = [];
});

const REPORT = "/api/reports/rate-by-variable?variable=casting_speed_m_min&bins=4";
const get = (srv: ServerProcess, p: string, cookie: string) => fetch(srv.baseUrl + p, { headers: { cookie } });
/** Polls the report until it answers 200 (a generous bound: the load runs on a busy test machine). */
async function reportWhenReady(srv: ServerProcess, cookie: string) {
  return waitFor(
    "the report to answer 200",
    async () => {
      const res = await get(srv, REPORT, cookie);
      if (res.status === 200) return (await res.json()) as { slabs: number };
      expect(res.status).toBe(503);
      return undefined;
    },
    90_000,
    200,
  );
}
const readyLines = (out: string) =>
  out
    .split("\n")
    .filter((l) => l.includes('"report cache ready"'))
    .map((l) => JSON.parse(l) as { from: string; snapshotIgnored?: string; slabs: number; variablesOnDisk?: number; diskMb?: number });

describe("the server starts before the report data are loaded", () => {
  it("when the report data are still loading, then sign-in and the yard answer, reports answer 503 with Retry-After in words; after SIGTERM the snapshot is written and the next start reads it", async () => {
    const files = newServerFiles();
    const snapshot = `${files.databaseFile}.report-cache`;
    execFileSync("mkfifo", [snapshot]);
    const launched = await launchServer({ files, seed: true, env: { LOG_LEVEL: "info" } });
    servers.push(launched);
    let released = false;
    try {
      await launched.waitHealthy();
      const quality = await launched.signIn("quality@demo.test");
      const inspector = await launched.signIn("inspector@demo.test");
      expect((await get(launched, "/api/yard/sync", inspector)).status).toBe(200);
      expect((await get(launched, "/api/me", quality)).status).toBe(200);
      const waiting = await get(launched, REPORT, quality);
      expect(waiting.status).toBe(503);
      const retry = Number(waiting.headers.get("retry-after"));
      expect(retry).toBeGreaterThanOrEqual(2);
      expect(retry).toBeLessThanOrEqual(10);
      const body = (await waiting.json()) as { error: { code: string; message: string; details: { retryAfterSeconds: number } } };
      expect(body.error.code).toBe("reports_warming_up");
      expect(body.error.message).toMatch(/^Reports are warming up: the slab data are being loaded \(about \d+ s\)\. Try again in a moment\.$/);
      expect(body.error.details.retryAfterSeconds).toBe(retry);
      expect(readyLines(launched.output())).toEqual([]);

      fs.writeFileSync(snapshot, "not a snapshot\n"); // opens the pipe for writing: the server's read goes on
      released = true;
      const report = await reportWhenReady(launched, quality);
      expect(report.slabs).toBeGreaterThan(0);
      expect(readyLines(launched.output())).toMatchObject([{ from: "the database", snapshotIgnored: "the file is not a report cache snapshot" }]);

      launched.kill("SIGTERM");
      expect(await launched.waitExit()).toEqual({ code: 0, signal: null });
      expect(launched.output()).toContain('"report cache snapshot written"');
      expect(fs.statSync(snapshot).isFile()).toBe(true);

      const again = await startServer({ files, env: { LOG_LEVEL: "info" } });
      servers.push(again);
      const cookie = await again.signIn("quality@demo.test");
      expect(await reportWhenReady(again, cookie)).toEqual(report);
      expect(readyLines(again.output())).toMatchObject([{ from: "the snapshot", slabs: readyLines(launched.output())[0]!.slabs }]);
      expect(readyLines(again.output())[0]!.snapshotIgnored).toBeUndefined();
    } finally {
      // A test that failed before writing must not leave the server's read waiting on the pipe.
      // Non-blocking: with no reader left (the server gone) opening the pipe fails instead of waiting.
      if (!released) {
        try {
          fs.closeSync(fs.openSync(snapshot, fs.constants.O_WRONLY | fs.constants.O_NONBLOCK));
        } catch {
          // nobody reads it
        }
      }
    }
  }, 240_000);

  it("when slab conditions were written after the last snapshot and the server was killed (SIGKILL), then the next start finds the snapshot out of date and rebuilds with the new values", async () => {
    const first = await startServer({ env: { LOG_LEVEL: "info" } });
    servers.push(first);
    const cookie = await first.signIn("quality@demo.test");
    const before = await reportWhenReady(first, cookie);
    first.kill("SIGTERM");
    await first.waitExit();
    // The snapshot is there; then a write the server never hears of (as an import thread's, cut off by a crash).
    const db = openDatabase(first.files.databaseFile);
    const slab = db.$client.prepare("select id from slabs where casting_speed_m_min is null order by id limit 1").pluck().get() as number;
    db.$client.prepare("update slabs set casting_speed_m_min = 3.9 where id = ?").run(slab);
    createResolver(db).resolve([slab]);
    db.$client.close();

    const second = await startServer({ files: first.files, env: { LOG_LEVEL: "info" } });
    servers.push(second);
    const after = (await reportWhenReady(second, await second.signIn("quality@demo.test"))) as {
      slabs: number;
      distribution: { affected: { max: number | null }; sound: { max: number | null } };
    };
    expect(readyLines(second.output())).toMatchObject([
      { from: "the database", snapshotIgnored: "the snapshot is out of date: slab conditions were written after the snapshot" },
    ]);
    expect(after.slabs).toBe(before.slabs);
    expect(Math.max(after.distribution.affected.max ?? 0, after.distribution.sound.max ?? 0)).toBe(3.9);
    second.kill("SIGKILL");
    await second.waitExit();
  }, 240_000);

  it("when REPORT_COLUMNS_MB leaves no room for the condition columns, then they go to files, rebuilt or from the snapshot, and a report answers as with every column in memory", async () => {
    const first = await startServer({ env: { LOG_LEVEL: "info" } });
    servers.push(first);
    const inMemory = await reportWhenReady(first, await first.signIn("quality@demo.test"));
    expect(readyLines(first.output())[0]!.variablesOnDisk).toBeUndefined();
    first.kill("SIGKILL");
    await first.waitExit();

    // A column file left behind by a process killed at the wrong moment: removed by the next start.
    const left = path.join(path.dirname(first.files.databaseFile), `.strandsight-column.${spawnSync("true").pid}.1.left`);
    fs.writeFileSync(left, "x");
    // Rebuilt from the database (the snapshot left behind by a kill is none): every column to a file.
    const rebuilt = await startServer({ files: first.files, env: { LOG_LEVEL: "info", REPORT_COLUMNS_MB: "0" } });
    servers.push(rebuilt);
    expect(await reportWhenReady(rebuilt, await rebuilt.signIn("quality@demo.test"))).toEqual(inMemory);
    expect(readyLines(rebuilt.output())).toMatchObject([{ from: "the database", variablesOnDisk: 22 }]);
    rebuilt.kill("SIGTERM");
    expect(await rebuilt.waitExit()).toEqual({ code: 0, signal: null });
    expect(rebuilt.output()).toContain('"report cache snapshot written"');

    // From the snapshot written from the files: straight back into files.
    const again = await startServer({ files: first.files, env: { LOG_LEVEL: "info", REPORT_COLUMNS_MB: "0" } });
    servers.push(again);
    expect(await reportWhenReady(again, await again.signIn("quality@demo.test"))).toEqual(inMemory);
    expect(readyLines(again.output())).toMatchObject([{ from: "the snapshot", variablesOnDisk: 22 }]);
    // Nothing of them in the database's directory: the files were removed when made.
    expect(fs.readdirSync(path.dirname(first.files.databaseFile)).filter((n) => n.includes(".strandsight-column."))).toEqual([]);
  }, 240_000);
});
