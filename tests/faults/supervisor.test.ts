/**
 * `npm start` runs the server under server/supervisor.ts: a crash (SIGKILL from outside, an uncaught
 * exception, an unhandled rejection) is logged with its cause and the server is started again; too
 * many crashes in a row stop it; SIGTERM stops everything cleanly. Real processes, real signals.
 */
import fs from "node:fs";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { afterEach, describe, expect, it } from "vitest";
import { disposeServer, isAlive, launchServer, REPO_ROOT, startServer, waitFor, type ServerProcess } from "../helpers/server-process";
import { ALLOCATOR_ENV, withAllocatorEnv } from "../../server/lib/allocator";

let servers: ServerProcess[] = [];
afterEach(async () => {
  for (const s of servers) await disposeServer(s);
  servers = [];
});
const track = <T extends ServerProcess>(s: T) => (servers.push(s), s);

/** Loads tests/helpers/crash-hook.mjs into the server process (see there). */
const crashHook = (mode: "exception" | "rejection" | "start") => ({
  NODE_OPTIONS: `--import=${pathToFileURL(path.join(REPO_ROOT, "tests/helpers/crash-hook.mjs")).href}`,
  CRASH_HOOK: mode,
});

async function me(srv: ServerProcess, cookie: string) {
  const res = await fetch(`${srv.baseUrl}/api/me`, { headers: { cookie } });
  return { status: res.status, body: (await res.json()) as { email?: string } };
}

/** Waits for the supervisor to start a server other than `pid` and for that one to answer. */
async function restartedAfter(srv: ServerProcess, pid: number): Promise<number> {
  const i = srv.serverPids().indexOf(pid);
  const next = await waitFor("a new server process", () => srv.serverPids()[i + 1], 60_000, 50);
  await waitFor(
    "the new server to answer",
    async () => {
      try {
        return (await fetch(`${srv.baseUrl}/api/health`)).status === 200 ? true : undefined;
      } catch {
        return undefined;
      }
    },
    60_000,
    100,
  );
  return next;
}

describe("npm start runs the server under the supervisor", () => {
  it("when npm start is run, then it builds and starts the compiled supervisor (build/server/supervisor.js) with plain Node", () => {
    const pkg = JSON.parse(fs.readFileSync(path.join(REPO_ROOT, "package.json"), "utf8")) as { scripts: Record<string, string> };
    expect(pkg.scripts.start).toBe("npm run --silent build && node --enable-source-maps build/server/supervisor.js");
    expect(pkg.scripts.build).toBe("vite build && npm run build:server");
    // build/server emptied first (no chunk of an earlier build left beside the new ones), then bundled.
    expect(pkg.scripts["build:server"]).toMatch(
      /^node -e "require\('node:fs'\)\.rmSync\('build\/server', .*\)" && esbuild .*supervisor=server\/supervisor\.ts/,
    );
  });

  it("when the server process is killed with SIGKILL, then the supervisor logs it, starts it again and /api/me answers the same session", async () => {
    const srv = track(await startServer({ entry: "supervisor" }));
    const cookie = await srv.signIn("quality@demo.test");
    expect(await me(srv, cookie)).toMatchObject({ status: 200, body: { email: "quality@demo.test" } });
    const [first] = srv.serverPids();
    expect(srv.serverPids()).toEqual([first]);

    process.kill(first!, "SIGKILL");
    const second = await restartedAfter(srv, first!);
    expect(second).not.toBe(first);
    expect(isAlive(first!)).toBe(false);
    expect(srv.output()).toContain(
      "strandsight supervisor: server crashed: it was killed by SIGKILL (killed from outside, e.g. by the out-of-memory killer). Restarting in 1000 ms",
    );
    // The supervisor itself never stopped; the session lives in the database and still works.
    expect(srv.child.exitCode).toBe(null);
    expect(await me(srv, cookie)).toMatchObject({ status: 200, body: { email: "quality@demo.test" } });
  }, 120_000);

  it("when the server throws an error nobody catches, then the error and its cause are logged before it exits, and the supervisor restarts it", async () => {
    const srv = track(await startServer({ entry: "supervisor", env: crashHook("exception") }));
    const [first] = srv.serverPids();
    process.kill(first!, "SIGUSR2");
    await restartedAfter(srv, first!);
    const out = srv.output();
    expect(out).toContain("Strandsight stopped on an uncaught exception:");
    expect(out).toContain("Error: the mould level record of strand 2 could not be decoded");
    expect(out).toContain("[cause]: RangeError: segment length 4294967295 is larger than the record (512 bytes)");
    expect(out).toContain("strandsight supervisor: server crashed: it exited with code 1 (the error is printed above). Restarting in 1000 ms");
    // The record comes before the supervisor's line about it.
    expect(out.indexOf("Strandsight stopped on an uncaught exception:")).toBeLessThan(out.indexOf("server crashed: it exited with code 1"));
    const cookie = await srv.signIn("inspector@demo.test");
    expect((await me(srv, cookie)).status).toBe(200);
  }, 120_000);

  it("when a promise is rejected with nobody waiting for it, then the rejection and its cause are logged and the server is restarted", async () => {
    const srv = track(await startServer({ entry: "supervisor", env: crashHook("rejection") }));
    const [first] = srv.serverPids();
    process.kill(first!, "SIGUSR2");
    await restartedAfter(srv, first!);
    const out = srv.output();
    expect(out).toContain("Strandsight stopped on an unhandled promise rejection:");
    expect(out).toContain("[cause]: RangeError: segment length 4294967295 is larger than the record (512 bytes)");
    expect(out).toContain("server crashed: it exited with code 1");
  }, 120_000);

  it("when the server crashes again and again, then the supervisor waits longer each time and gives up after the limit with exit 1", async () => {
    const srv = track(
      await launchServer({ entry: "supervisor", env: { ...crashHook("start"), SUPERVISOR_RESTART_DELAY_MS: "50", SUPERVISOR_MAX_RESTARTS: "2" } }),
    );
    const exit = await srv.waitExit(90_000);
    expect(exit, srv.output()).toEqual({ code: 1, signal: null });
    const out = srv.output();
    // Started once and restarted twice (the limit), waiting 50 ms then 100 ms; the third crash ends it.
    expect(srv.serverPids().length).toBe(3);
    expect(out).toContain("Restarting in 50 ms (restart 1 of at most 2 within 5 minutes)");
    expect(out).toContain("Restarting in 100 ms (restart 2 of at most 2 within 5 minutes)");
    expect(out).toContain("That is 3 crashes within 5 minutes: giving up.");
    expect(out.match(/Strandsight stopped on an uncaught exception:/g)?.length).toBe(3);
    for (const pid of srv.serverPids()) expect(isAlive(pid)).toBe(false);
  }, 120_000);

  it("when the supervisor gets SIGTERM, then the server finishes and stops, and the supervisor exits 0 without a restart", async () => {
    const srv = track(await startServer({ entry: "supervisor" }));
    const [pid] = srv.serverPids();
    srv.kill("SIGTERM");
    const exit = await srv.waitExit(30_000);
    expect(exit, srv.output()).toEqual({ code: 0, signal: null });
    expect(isAlive(pid!)).toBe(false);
    expect(srv.serverPids()).toEqual([pid]);
    expect(srv.output()).toContain(`strandsight supervisor: SIGTERM: asking the server (pid ${pid}) to finish its requests and stop.`);
    expect(srv.output()).toContain("strandsight supervisor: server stopped (exited with code 0).");
    // Closed cleanly: the last connection's close checkpoints the WAL away.
    expect(fs.existsSync(`${srv.files.databaseFile}-wal`)).toBe(false);
    await expect(fetch(`${srv.baseUrl}/api/health`)).rejects.toThrow();
  }, 120_000);
});

describe("the server runs with the C allocator's setting for large arrays (server/lib/allocator.ts)", () => {
  /** The environment a process was started with (Linux's /proc), as name → value. */
  const environOf = (pid: number) =>
    new Map(
      fs
        .readFileSync(`/proc/${pid}/environ`, "utf8")
        .split("\0")
        .filter(Boolean)
        .map((kv) => [kv.slice(0, kv.indexOf("=")), kv.slice(kv.indexOf("=") + 1)] as const),
    );

  it.runIf(process.platform === "linux")(
    "when npm start's supervisor starts the server, then glibc's threshold is held at 128 kB in the server's environment, an operator's own value is kept, and a server started by hand says it runs without",
    async () => {
      expect(ALLOCATOR_ENV).toEqual({ MALLOC_MMAP_THRESHOLD_: "131072" });
      const running = (srv: ServerProcess) =>
        waitFor("the start-up lines", () => (srv.output().includes("Strandsight is running") ? true : undefined), 30_000, 50);
      const plain = track(await startServer({ entry: "supervisor", env: { LOG_LEVEL: "info" } }));
      await running(plain);
      expect(environOf(plain.serverPids()[0]!).get("MALLOC_MMAP_THRESHOLD_")).toBe("131072");
      // Not the supervisor's own environment: it is set for the server it starts.
      expect(environOf(plain.child.pid!).has("MALLOC_MMAP_THRESHOLD_")).toBe(false);

      const own = track(await startServer({ entry: "supervisor", env: { MALLOC_MMAP_THRESHOLD_: "262144" } }));
      expect(environOf(own.serverPids()[0]!).get("MALLOC_MMAP_THRESHOLD_")).toBe("262144");

      const byHand = track(await startServer({ env: { LOG_LEVEL: "info" } }));
      await running(byHand);
      expect(byHand.output()).toContain("started without the C allocator's setting npm start gives the server");
      expect(plain.output()).not.toContain("started without the C allocator's setting");
    },
    120_000,
  );

  it("when the server's environment is made, then an empty or missing setting becomes 128 kB and an operator's own value is kept, nothing else changed", () => {
    expect(withAllocatorEnv({ PORT: "3000" })).toEqual({ PORT: "3000", MALLOC_MMAP_THRESHOLD_: "131072" });
    expect(withAllocatorEnv({ MALLOC_MMAP_THRESHOLD_: "" })).toEqual({ MALLOC_MMAP_THRESHOLD_: "131072" });
    expect(withAllocatorEnv({ MALLOC_MMAP_THRESHOLD_: "262144", PORT: "3000" })).toEqual({ MALLOC_MMAP_THRESHOLD_: "262144", PORT: "3000" });
    const mine = { PORT: "3000" };
    withAllocatorEnv(mine);
    expect(mine).toEqual({ PORT: "3000" });
  });

  it("when the systemd unit starts the server, then it sets the same value", () => {
    const unit = fs.readFileSync(path.join(REPO_ROOT, "deploy/strandsight.service"), "utf8");
    const lines = unit.split("\n").filter((l) => l.startsWith("Environment="));
    expect(lines).toEqual(Object.entries(ALLOCATOR_ENV).map(([k, v]) => `Environment=${k}=${v}`));
  });
});
