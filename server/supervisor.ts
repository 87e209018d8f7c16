/**
 * `npm start`: runs the server (server/index.ts) as a child process and starts it again when it
 * crashes, so one bad request or a bug does not leave the plant without the app until someone notices.
 *
 * - A crash (any exit but 0 or 78, or a signal such as SIGKILL from the kernel's out-of-memory killer)
 *   is logged with its exit code or signal and the server is started again after a short wait that
 *   doubles with each quick crash (1 s, 2 s, 4 s … at most 30 s).
 * - More than SUPERVISOR_MAX_RESTARTS crashes (default 5) within 5 minutes: it gives up and exits 1,
 *   since something needs a person (systemd, if it runs this, decides what then).
 * - Exit 78 (server/lib/startup-error.ts) is a start-up failure a restart cannot fix (a bad setting,
 *   the port taken, a database that cannot be written): the server has printed why; we stop, exit 78.
 * - Exit 0 means the server was stopped on purpose: we stop too.
 * - SIGTERM / SIGINT / SIGHUP are passed to the server, which finishes its requests and exits 0.
 *
 * Node's own child_process.fork: the same Node and loader flags (tsx) as this process, and an IPC
 * channel through which the server says when it listens. A plant running systemd can let systemd do
 * this instead (deploy/strandsight.service); see the README.
 */
import { fork, type ChildProcess } from "node:child_process";
import { fileURLToPath } from "node:url";
import { COMPILED } from "./lib/paths";
import { EXIT_CANNOT_START } from "./lib/startup-error";
import { withAllocatorEnv } from "./lib/allocator";

// The compiled supervisor (build/server/supervisor.js) runs the compiled server beside it.
const SERVER = fileURLToPath(new URL(COMPILED ? "./index.js" : "./index.ts", import.meta.url));
/** A run this long after listening counts as healthy: the next crash waits the shortest time again. */
const HEALTHY_AFTER_MS = 60_000;
const CRASH_WINDOW_MS = 5 * 60_000;
const MAX_DELAY_MS = 30_000;
/** How long the server may take to stop after the signal (its own limit is 15 s) before it is killed. */
const STOP_GRACE_MS = 20_000;

/** A whole number from the environment within [min, max], else the default (these are tuning knobs, not settings the app needs). */
function knob(name: string, fallback: number, min: number, max: number): number {
  const raw = process.env[name];
  const n = raw === undefined || raw.trim() === "" ? NaN : Number(raw);
  if (Number.isInteger(n) && n >= min && n <= max) return n;
  if (raw !== undefined && raw.trim() !== "") log(`${name}=${raw} is not a whole number from ${min} to ${max}; using ${fallback}.`);
  return fallback;
}

function log(line: string) {
  // stderr, plain text, whatever LOG_LEVEL says: these lines are what an operator looks for after an outage.
  process.stderr.write(`${new Date().toISOString()} strandsight supervisor: ${line}\n`);
}

const firstDelayMs = knob("SUPERVISOR_RESTART_DELAY_MS", 1_000, 10, MAX_DELAY_MS);
const maxRestarts = knob("SUPERVISOR_MAX_RESTARTS", 5, 0, 1_000);

let child: ChildProcess | null = null;
let listeningAt: number | null = null;
let restartTimer: NodeJS.Timeout | null = null;
let stopping: NodeJS.Signals | null = null;
let quickCrashes = 0;
const crashTimes: number[] = [];

function start() {
  restartTimer = null;
  listeningAt = null;
  const c = fork(SERVER, process.argv.slice(2), {
    // The C allocator's setting for a server holding large arrays (lib/allocator.ts), unless set already.
    env: { ...withAllocatorEnv(process.env), STRANDSIGHT_SUPERVISED: "1" },
    stdio: ["inherit", "inherit", "inherit", "ipc"],
  });
  child = c;
  log(`server started (pid ${c.pid})`);
  c.on("message", (m: unknown) => {
    if ((m as { type?: unknown })?.type === "listening") listeningAt = Date.now();
  });
  c.on("error", (err) => log(`could not run the server: ${err.message}`));
  c.once("exit", (code, signal) => onExit(c, code, signal));
}

function onExit(c: ChildProcess, code: number | null, signal: NodeJS.Signals | null) {
  if (child !== c) return;
  child = null;
  const how = signal ? `was killed by ${signal}` : `exited with code ${code}`;
  if (stopping) {
    log(`server stopped (${how}).`);
    // Killed by the very signal we passed on: it was still starting and had no handler yet.
    process.exit(code === 0 || signal === forwarded(stopping) ? 0 : (code ?? 1));
  }
  if (code === 0) {
    log("server stopped on purpose (exit 0); the supervisor stops too.");
    process.exit(0);
  }
  if (code === EXIT_CANNOT_START) {
    log(`server cannot start (exit ${EXIT_CANNOT_START}; the reason is printed above). Not restarting: fix the cause and start again.`);
    process.exit(EXIT_CANNOT_START);
  }
  const now = Date.now();
  const ranHealthy = listeningAt !== null && now - listeningAt >= HEALTHY_AFTER_MS;
  quickCrashes = ranHealthy ? 1 : quickCrashes + 1;
  crashTimes.push(now);
  while (crashTimes.length && crashTimes[0]! < now - CRASH_WINDOW_MS) crashTimes.shift();
  const cause =
    signal === "SIGKILL"
      ? " (killed from outside, e.g. by the out-of-memory killer)"
      : signal === "SIGABRT"
        ? " (Node aborted, e.g. its memory limit was reached: see the lines above)"
        : signal
          ? ""
          : " (the error is printed above)";
  if (crashTimes.length > maxRestarts) {
    log(
      `server crashed: it ${how}${cause}. That is ${crashTimes.length} crashes within ${CRASH_WINDOW_MS / 60_000} minutes: giving up. Read the errors above, fix the cause and start again.`,
    );
    process.exit(1);
  }
  const delay = Math.min(firstDelayMs * 2 ** (quickCrashes - 1), MAX_DELAY_MS);
  log(
    `server crashed: it ${how}${cause}. Restarting in ${delay} ms (restart ${crashTimes.length} of at most ${maxRestarts} within ${CRASH_WINDOW_MS / 60_000} minutes).`,
  );
  restartTimer = setTimeout(start, delay);
}

/** The server stops gracefully on SIGTERM and SIGINT; a hang-up (terminal closed) asks the same. */
const forwarded = (signal: NodeJS.Signals): NodeJS.Signals => (signal === "SIGHUP" ? "SIGTERM" : signal);

function stop(signal: NodeJS.Signals) {
  if (stopping) {
    // A second Ctrl-C: pass it on (the server ignores repeats and keeps finishing its requests).
    child?.kill(forwarded(signal));
    return;
  }
  stopping = signal;
  if (restartTimer) {
    clearTimeout(restartTimer);
    log(`${signal}: stopping (no server running).`);
    process.exit(0);
  }
  if (!child) process.exit(0);
  log(`${signal}: asking the server (pid ${child.pid}) to finish its requests and stop.`);
  child.kill(forwarded(signal));
  setTimeout(() => {
    log(`the server did not stop within ${STOP_GRACE_MS / 1000} s: killing it.`);
    child?.kill("SIGKILL");
  }, STOP_GRACE_MS).unref();
}

for (const signal of ["SIGTERM", "SIGINT", "SIGHUP"] as const) process.on(signal, () => stop(signal));
start();
