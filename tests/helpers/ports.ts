import net from "node:net";

/**
 * Ports for servers the tests start, taken below the range the OS hands out on its own
 * (/proc/sys/net/ipv4/ip_local_port_range, 32768–60999 on Linux): a port the OS picked and the probe
 * gave back could be taken by any outgoing connection, or by another test file running beside this
 * one, before the server bound it ("port … already in use" on a busy machine). Each of vitest's
 * workers (VITEST_POOL_ID, 1 … the number of workers) has its own block of 200 ports, so files running
 * side by side never reach for the same one; within a block the next free one is taken in turn.
 * Written here because the port-finding packages (get-port, portfinder) guard against their own
 * process only.
 */
const PORT_BLOCK = 200;
const FIRST_TEST_PORT = 20_000;
let portTurn = 0;

/** Whether nothing listens on this port of 127.0.0.1 now. */
async function canListen(port: number): Promise<boolean> {
  const probe = net.createServer();
  return new Promise((resolve) => {
    probe.once("error", () => resolve(false));
    probe.listen(port, "127.0.0.1", () => probe.close(() => resolve(true)));
  });
}

/** A port nobody listens on right now, from this worker's own block (above). */
export async function freePort(): Promise<number> {
  const worker = Number(process.env.VITEST_POOL_ID ?? 0) || 0;
  const first = FIRST_TEST_PORT + (worker % 50) * PORT_BLOCK;
  for (let tries = 0; tries < PORT_BLOCK; tries++) {
    const port = first + (portTurn++ % PORT_BLOCK);
    if (await canListen(port)) return port;
  }
  throw new Error(`no free port in ${first}–${first + PORT_BLOCK - 1} for this test worker`);
}
