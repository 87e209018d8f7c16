import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { freePort } from "./ports";

export { freePort };

export const REPO_ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../..");
export const DEMO_PASSWORD = "strandsight-demo";

export interface ServerFiles {
  /** The temp folder holding the database, its secret and the uploads. */
  dir: string;
  databaseFile: string;
  uploadDir: string;
}

export interface StartOptions {
  /** Reuse these files (a restart); a new temp folder when left out. */
  files?: ServerFiles;
  /** SEED_DEMO; true by default on new files, false on reused ones. */
  seed?: boolean;
  /** Extra environment (e.g. MAIL_POLL_MS). */
  env?: Record<string, string>;
  /** "server": server/index.ts itself (default); "supervisor": server/supervisor.ts, as `npm start` runs it. */
  entry?: "server" | "supervisor";
  /** This port instead of a free one (e.g. one that is taken). */
  port?: number;
  /** Run the compiled server (build/server/*.js, `npm run build:server`) with plain Node, as `npm start` does. */
  compiled?: boolean;
}

export interface Exit {
  code: number | null;
  signal: NodeJS.Signals | null;
}

export interface ServerProcess {
  files: ServerFiles;
  /** The pids of the server processes the supervisor has started so far (from its log lines), oldest first. */
  serverPids(): number[];
  port: number;
  /** http://localhost:PORT, also the server's BETTER_AUTH_URL (the Origin writes must carry). */
  baseUrl: string;
  child: ChildProcess;
  /** Everything the process wrote to stdout and stderr so far (for failure messages). */
  output(): string;
  kill(signal: NodeJS.Signals): void;
  waitExit(timeoutMs?: number): Promise<Exit>;
  /** Signs in a demo user; the Cookie header value for later requests. */
  signIn(email: string, password?: string): Promise<string>;
}

export function newServerFiles(): ServerFiles {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-fault-"));
  return { dir, databaseFile: path.join(dir, "app.db"), uploadDir: path.join(dir, "uploads") };
}

/**
 * Starts the real server (`node --import tsx server/index.ts`, or the supervisor that runs it) on its
 * own files and a free port and waits until GET /api/health answers. Only PATH and HOME are passed on
 * from the test's own environment, so nothing of the developer's setup (SMTP_URL, NODE_ENV=test from
 * vitest…) leaks in.
 */
export async function startServer(opts: StartOptions = {}): Promise<ServerProcess> {
  const srv = await launchServer(opts);
  await srv.waitHealthy();
  return srv;
}

/** Starts the process without waiting for it to answer (for starts that are meant to fail). */
export async function launchServer(opts: StartOptions = {}): Promise<ServerProcess & { waitHealthy(): Promise<void> }> {
  const files = opts.files ?? newServerFiles();
  const seed = opts.seed ?? !opts.files;
  const port = opts.port ?? (await freePort());
  const baseUrl = `http://localhost:${port}`;
  const env: Record<string, string> = {
    PATH: process.env.PATH ?? "/usr/bin:/bin",
    HOME: process.env.HOME ?? os.tmpdir(),
    NODE_ENV: "test",
    HOST: "127.0.0.1",
    PORT: String(port),
    BETTER_AUTH_URL: baseUrl,
    DATABASE_FILE: files.databaseFile,
    UPLOAD_DIR: files.uploadDir,
    FAKE_SMTP_PORT: "0",
    SEED_DEMO: seed ? "true" : "false",
    SEED_SCALE: "0.01",
    DEMO_PASSWORD,
    LOG_LEVEL: "silent",
    ...opts.env,
  };
  const name = opts.entry === "supervisor" ? "supervisor" : "index";
  const args = opts.compiled ? [path.join(REPO_ROOT, "build/server", `${name}.js`)] : ["--import", "tsx", path.join(REPO_ROOT, "server", `${name}.ts`)];
  const child = spawn(process.execPath, args, {
    cwd: REPO_ROOT,
    env,
    stdio: ["ignore", "pipe", "pipe"],
  });
  let out = "";
  child.stdout!.on("data", (c: Buffer) => (out += c.toString()));
  child.stderr!.on("data", (c: Buffer) => (out += c.toString()));
  let exit: Exit | null = null;
  const exited = new Promise<Exit>((resolve) => {
    child.once("exit", (code, signal) => {
      exit = { code, signal };
      resolve(exit);
    });
  });

  const srv: ServerProcess & { waitHealthy(): Promise<void> } = {
    waitHealthy: async () => undefined, // set below
    files,
    serverPids: () => [...out.matchAll(/strandsight supervisor: server started \(pid (\d+)\)/g)].map((m) => Number(m[1])),
    port,
    baseUrl,
    child,
    output: () => out,
    kill(signal) {
      if (exit === null) child.kill(signal);
    },
    async waitExit(timeoutMs = 30_000) {
      let timer: NodeJS.Timeout | undefined;
      const timeout = new Promise<never>((_, reject) => {
        timer = setTimeout(() => reject(new Error(`the server did not exit within ${timeoutMs} ms\n${out}`)), timeoutMs);
      });
      try {
        return await Promise.race([exited, timeout]);
      } finally {
        clearTimeout(timer);
      }
    },
    async signIn(email, password = DEMO_PASSWORD) {
      const res = await fetch(`${baseUrl}/api/auth/sign-in/email`, {
        method: "POST",
        headers: { "content-type": "application/json", origin: baseUrl },
        body: JSON.stringify({ email, password }),
      });
      if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${await res.text()}`);
      const cookies = res.headers.getSetCookie().map((c) => c.split(";")[0]!);
      if (cookies.length === 0) throw new Error(`sign-in as ${email} set no cookie`);
      return cookies.join("; ");
    },
  };

  srv.waitHealthy = async () => {
    const deadline = Date.now() + 90_000;
    for (;;) {
      if (exit !== null) throw new Error(`the server exited during start-up (${JSON.stringify(exit)}):\n${out}`);
      try {
        const res = await fetch(`${baseUrl}/api/health`);
        if (res.status === 200) break;
      } catch {
        // not listening yet
      }
      if (Date.now() > deadline) {
        srv.kill("SIGKILL");
        throw new Error(`the server did not answer /api/health within 90 s:\n${out}`);
      }
      await new Promise((r) => setTimeout(r, 100));
    }
  };
  return srv;
}

/** Is a process with this pid still there? */
export function isAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === "ESRCH") return false;
    throw err;
  }
}

/** Stops a server that may still be running and removes its files. */
export async function disposeServer(srv: ServerProcess | undefined, removeFiles = true) {
  if (!srv) return;
  if (srv.child.exitCode === null && srv.child.signalCode === null) {
    srv.kill("SIGKILL");
    await srv.waitExit().catch(() => undefined);
  }
  // A supervisor killed outright leaves its server running: stop that one too.
  for (const pid of srv.serverPids()) if (isAlive(pid)) process.kill(pid, "SIGKILL");
  if (removeFiles) fs.rmSync(srv.files.dir, { recursive: true, force: true });
}

/** Polls `check` until it returns a value other than undefined (or the time is up). */
export async function waitFor<T>(what: string, check: () => T | undefined | Promise<T | undefined>, timeoutMs = 15_000, everyMs = 50): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const v = await check();
    if (v !== undefined) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}
