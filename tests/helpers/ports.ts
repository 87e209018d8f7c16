import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import { processAlive } from "../../server/lib/process-alive";

/**
 * Ports for the servers the tests start as their own processes (server-process.ts), which bind
 * their port themselves some seconds after it is chosen. A port the OS picked and a probe gave back
 * could be taken by another test file or any outgoing connection in between ("port … already in
 * use" on a busy machine). So a port is taken from below the range the OS hands out on its own
 * (/proc/sys/net/ipv4/ip_local_port_range, 32768–60999 on Linux), and reserved with a lock file
 * that every test process on the machine respects (another vitest run too), until the process that
 * reserved it ends. A lock whose process is gone is taken over (vitest ends its workers without
 * their "exit" event at times, so such files stay in the folder until then). Written here because the
 * port-finding packages (get-port, portfinder) guard against their own process only.
 */
export const TEST_PORTS = { first: 20_000, count: 10_000 } as const;
const LOCKS = path.join(os.tmpdir(), "strandsight-test-ports");
const held: string[] = [];
let cleanupSet = false;

const alive = processAlive;

/** Reserves `port` for this process; false when a live process holds it. */
export function reservePort(port: number): boolean {
  fs.mkdirSync(LOCKS, { recursive: true });
  const file = path.join(LOCKS, `${port}.lock`);
  for (let attempt = 0; attempt < 2; attempt++) {
    try {
      fs.writeFileSync(file, String(process.pid), { flag: "wx" });
      held.push(file);
      if (!cleanupSet) {
        cleanupSet = true;
        process.once("exit", () => {
          for (const f of held) fs.rmSync(f, { force: true });
        });
      }
      return true;
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== "EEXIST") throw err;
      const owner = Number(fs.readFileSync(file, "utf8"));
      if (owner === process.pid || (owner > 0 && alive(owner))) return false;
      fs.rmSync(file, { force: true }); // its process is gone
    }
  }
  return false;
}

/** Whether nothing listens on this port of 127.0.0.1 or ::1 now. */
export async function canListen(port: number): Promise<boolean> {
  const on = (host: string) =>
    new Promise<boolean>((resolve) => {
      const probe = net.createServer();
      probe.once("error", (err: NodeJS.ErrnoException) => resolve(err.code === "EADDRNOTAVAIL" || err.code === "EAFNOSUPPORT"));
      probe.listen(port, host, () => probe.close(() => resolve(true)));
    });
  return (await on("127.0.0.1")) && (await on("::1"));
}

/** A port nobody listens on and no other test process has reserved; reserved for this one until it ends. */
export async function freePort(): Promise<number> {
  const start = Math.floor(Math.random() * TEST_PORTS.count);
  for (let k = 0; k < TEST_PORTS.count; k++) {
    const port = TEST_PORTS.first + ((start + k) % TEST_PORTS.count);
    if (!reservePort(port)) continue;
    if (await canListen(port)) return port;
  }
  throw new Error(`no free port in ${TEST_PORTS.first}–${TEST_PORTS.first + TEST_PORTS.count - 1}`);
}
