/**
 * Graceful shutdown of the real server process: on SIGTERM/SIGINT it stops accepting connections,
 * lets the requests in flight finish with their normal answer, closes the database and exits 0.
 */
import fs from "node:fs";
import http from "node:http";
import net from "node:net";
import { once } from "node:events";
import { afterEach, describe, expect, it } from "vitest";
import { csv, HEAT_FILE_HEADERS, heatFileRow } from "../helpers/workbooks";
import { disposeServer, startServer, waitFor, type ServerProcess } from "../helpers/server-process";

let srv: ServerProcess | undefined;
afterEach(async () => {
  await disposeServer(srv);
  srv = undefined;
});

/** Resolves "refused" when nothing listens on the port any more, "accepted" when something does. */
function tryConnect(port: number): Promise<"accepted" | "refused"> {
  return new Promise((resolve, reject) => {
    const s = net.connect(port, "127.0.0.1");
    s.once("connect", () => {
      s.destroy();
      resolve("accepted");
    });
    s.once("error", (err: NodeJS.ErrnoException) => (err.code === "ECONNREFUSED" ? resolve("refused") : reject(err)));
  });
}

const HEAT_HEADERS = HEAT_FILE_HEADERS;
const heat = (i: number) => heatFileRow("SHD", i);

describe("graceful shutdown", () => {
  it("when SIGTERM arrives while a large dry-run import is being sent, then new connections are refused, the import still gets its 200 and the process exits 0", async () => {
    srv = await startServer();
    const cookie = await srv.signIn("process@demo.test");
    const N = 20_000;
    const file = csv(
      HEAT_HEADERS,
      Array.from({ length: N }, (_, i) => heat(i)),
    );
    const boundary = "----strandsight-fault-boundary";
    const head = Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="shutdown-heats.csv"\r\nContent-Type: text/csv\r\n\r\n`);
    const tail = Buffer.from(`\r\n--${boundary}--\r\n`);
    const half = Math.floor(file.length / 2);

    // A client that keeps its connections alive, as browsers do.
    const agent = new http.Agent({ keepAlive: true, maxSockets: 1 });
    const req = http.request({
      agent,
      host: "127.0.0.1",
      port: srv.port,
      method: "POST",
      path: "/api/import/heats?dryRun=true",
      headers: {
        cookie,
        origin: srv.baseUrl,
        "content-type": `multipart/form-data; boundary=${boundary}`,
        "content-length": head.length + file.length + tail.length,
        // The server answers "100 Continue" once it has read the request head: from then on the
        // request is in flight on the server's side, not an idle connection it may drop.
        expect: "100-continue",
      },
    });
    const answer = new Promise<{ status: number; connection: string | undefined; body: string }>((resolve, reject) => {
      req.once("response", (res) => {
        let body = "";
        res.setEncoding("utf8");
        res.on("data", (c: string) => (body += c));
        res.once("end", () => resolve({ status: res.statusCode!, connection: res.headers.connection, body }));
        res.once("error", reject);
      });
      req.once("error", reject);
    });
    let answered = false;
    void answer.then(
      () => (answered = true),
      () => (answered = true),
    );
    await once(req, "continue");
    await new Promise<void>((resolve, reject) => req.write(Buffer.concat([head, file.subarray(0, half)]), (err) => (err ? reject(err) : resolve())));

    srv.kill("SIGTERM");
    // The listening socket closes: a new client is refused while the old request is still open.
    await waitFor("the listening socket to close", async () => ((await tryConnect(srv!.port)) === "refused" ? true : undefined), 15_000, 50);
    expect(answered).toBe(false);
    expect(srv.child.exitCode).toBe(null);

    req.end(Buffer.concat([file.subarray(half), tail]));
    const res = await answer;
    expect(res.status, res.body.slice(0, 500)).toBe(200);
    const body = JSON.parse(res.body) as { dryRun: boolean; valid: boolean; rows: number; counts: { created: number }; importId: number | null };
    expect(body).toMatchObject({ dryRun: true, valid: true, rows: N, counts: { created: N }, importId: null });
    // The answer tells the client not to reuse the connection: its next request needs a new one, and
    // that is refused (not served on the old connection, which would hold the exit back).
    expect(res.connection).toBe("close");
    const next = await new Promise<string>((resolve) => {
      const r = http.get({ agent, host: "127.0.0.1", port: srv!.port, path: "/api/health" }, (res2) => {
        res2.resume();
        resolve(`answered ${res2.statusCode}`);
      });
      r.once("error", (err: NodeJS.ErrnoException) => resolve(err.code ?? err.message));
    });
    expect(next).toBe("ECONNREFUSED");
    agent.destroy();

    const exit = await srv.waitExit(20_000);
    expect(exit, srv.output()).toEqual({ code: 0, signal: null });
    // The database was closed cleanly: the last connection's close checkpoints and removes the WAL.
    expect(fs.existsSync(`${srv.files.databaseFile}-wal`)).toBe(false);
    expect(await tryConnect(srv.port)).toBe("refused");
  }, 120_000);

  it("when SIGINT arrives with an idle keep-alive connection open, then the server closes it and exits 0", async () => {
    srv = await startServer();
    const agent = new http.Agent({ keepAlive: true, maxSockets: 1 });
    const get = () =>
      new Promise<{ status: number; socket: net.Socket }>((resolve, reject) => {
        const r = http.get({ host: "127.0.0.1", port: srv!.port, path: "/api/health", agent }, (res) => {
          res.resume();
          res.once("end", () => resolve({ status: res.statusCode!, socket: r.socket as net.Socket }));
        });
        r.once("error", reject);
      });
    const first = await get();
    expect(first.status).toBe(200);
    const closed = once(first.socket, "close");
    // The socket stays open, idle, in the agent's pool.
    expect(first.socket.destroyed).toBe(false);

    srv.kill("SIGINT");
    await closed;
    const exit = await srv.waitExit(20_000);
    expect(exit, srv.output()).toEqual({ code: 0, signal: null });
    expect(await tryConnect(srv.port)).toBe("refused");
    agent.destroy();
  }, 120_000);
});
