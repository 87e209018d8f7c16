/*
 * The ports the tests start their servers on (tests/helpers/ports.ts): below the range the OS hands
 * out by itself, one block per vitest worker, and never one something already listens on.
 */
import fs from "node:fs";
import net from "node:net";
import { afterEach, describe, expect, it } from "vitest";
import { freePort } from "../helpers/ports";

const listening: net.Server[] = [];
afterEach(async () => {
  await Promise.all(listening.splice(0).map((s) => new Promise<void>((r) => s.close(() => r()))));
});

async function listenOn(port: number) {
  const s = net.createServer();
  await new Promise<void>((resolve, reject) => {
    s.once("error", reject);
    s.listen(port, "127.0.0.1", resolve);
  });
  listening.push(s);
}

describe("ports for the tests' servers", () => {
  it("when a test asks for a port, then it is below the range the OS picks ports from, and a server can listen on it", async () => {
    const [low] = fs.readFileSync("/proc/sys/net/ipv4/ip_local_port_range", "utf8").trim().split(/\s+/).map(Number);
    const port = await freePort();
    expect(port).toBeGreaterThanOrEqual(20_000);
    expect(port).toBeLessThan(low!);
    await listenOn(port);
  });

  it("when a port of the block is taken, then the next ask skips it and gives one nobody listens on", async () => {
    const a = await freePort();
    await listenOn(a);
    const b = await freePort();
    expect(b).not.toBe(a);
    await listenOn(b);
  });

  it("when two workers ask, then their ports come from blocks that do not overlap", async () => {
    const saved = process.env.VITEST_POOL_ID;
    try {
      process.env.VITEST_POOL_ID = "1";
      const one = await freePort();
      process.env.VITEST_POOL_ID = "2";
      const two = await freePort();
      expect(Math.floor((one - 20_000) / 200)).toBe(1);
      expect(Math.floor((two - 20_000) / 200)).toBe(2);
    } finally {
      if (saved === undefined) delete process.env.VITEST_POOL_ID;
      else process.env.VITEST_POOL_ID = saved;
    }
  });
});
