/*
 * The ports the tests start their server processes on (tests/helpers/ports.ts): below the range the
 * OS hands out by itself, reserved across every test process on the machine, and never one that
 * something listens on.
 */
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import { afterEach, describe, expect, it } from "vitest";
import { canListen, freePort, reservePort, TEST_PORTS } from "../helpers/ports";

const listening: net.Server[] = [];
afterEach(async () => {
  await Promise.all(listening.splice(0).map((s) => new Promise<void>((r) => s.close(() => r()))));
});

async function listenOn(port: number, host = "127.0.0.1") {
  const s = net.createServer();
  await new Promise<void>((resolve, reject) => {
    s.once("error", reject);
    s.listen(port, host, resolve);
  });
  listening.push(s);
}

const lockOf = (port: number) => path.join(os.tmpdir(), "strandsight-test-ports", `${port}.lock`);

/** A port of the range that no lock names and nothing listens on, not reserved (for the lock cases). */
async function unheldPort() {
  for (;;) {
    const port = TEST_PORTS.first + Math.floor(Math.random() * TEST_PORTS.count);
    if (!fs.existsSync(lockOf(port)) && (await canListen(port))) return port;
  }
}

describe("ports for the tests' server processes", () => {
  it("when a test asks for ports, then each is below the range the OS picks ports from, reserved for it, different each time, and a server can listen on it", async () => {
    const [low] = fs.readFileSync("/proc/sys/net/ipv4/ip_local_port_range", "utf8").trim().split(/\s+/).map(Number);
    expect(TEST_PORTS.first + TEST_PORTS.count).toBeLessThanOrEqual(low!);
    const a = await freePort();
    const b = await freePort();
    expect(a).not.toBe(b);
    for (const p of [a, b]) {
      expect(p).toBeGreaterThanOrEqual(TEST_PORTS.first);
      expect(fs.readFileSync(lockOf(p), "utf8")).toBe(String(process.pid));
      // Asked again by this process, a reserved port is not handed out twice.
      expect(reservePort(p)).toBe(false);
      await listenOn(p);
    }
  });

  it("when another live test process holds a port's lock, then it is not reserved; when the holder is gone, the port is taken over", async () => {
    const port = await unheldPort();
    fs.mkdirSync(path.dirname(lockOf(port)), { recursive: true });
    try {
      // Held by a process that is alive (vitest's own, which started this one).
      fs.writeFileSync(lockOf(port), String(process.ppid));
      expect(reservePort(port)).toBe(false);
      // Held by a process that has ended.
      const gone = spawnSync(process.execPath, ["-e", "process.stdout.write(String(process.pid))"], { encoding: "utf8" });
      fs.writeFileSync(lockOf(port), gone.stdout);
      expect(reservePort(port)).toBe(true);
      expect(fs.readFileSync(lockOf(port), "utf8")).toBe(String(process.pid));
    } finally {
      fs.rmSync(lockOf(port), { force: true });
    }
  });

  it("when something listens on a port, on 127.0.0.1 or only on ::1, then the port does not count as free", async () => {
    const a = await unheldPort();
    expect(await canListen(a)).toBe(true);
    await listenOn(a);
    expect(await canListen(a)).toBe(false);
    const b = await unheldPort();
    await listenOn(b, "::1");
    expect(await canListen(b)).toBe(false);
  });
});
