/*
 * The compiled server (build/server from `npm run build:server`, as `npm start` runs it) starts its
 * compiled report thread (build/server/report-thread.js): a fact report is worked out there and
 * answered, after the "warming up" answers of the start, with no TypeScript loader in the process.
 */
import fs from "node:fs";
import path from "node:path";
import { afterEach, describe, expect, it } from "vitest";
import { disposeServer, REPO_ROOT, startServer, waitFor, type ServerProcess } from "../helpers/server-process";

const servers: ServerProcess[] = [];
afterEach(async () => {
  while (servers.length) await disposeServer(servers.pop()!);
});

describe("the compiled report thread", () => {
  it("when the compiled server is asked for a report that reads the slab facts, then its compiled report thread loads them and answers", async () => {
    expect(fs.existsSync(path.join(REPO_ROOT, "build/server/report-thread.js")), "report-thread.js: run npm run build:server").toBe(true);
    const srv = await startServer({ entry: "supervisor", compiled: true, env: { LOG_LEVEL: "info" } });
    servers.push(srv);
    expect(srv.output()).not.toMatch(/tsx/);
    const cookie = await srv.signIn("quality@demo.test");
    const body = await waitFor(
      "the report to answer 200",
      async () => {
        const res = await fetch(`${srv.baseUrl}/api/reports/rate-by-variable?variable=casting_speed_m_min&bins=4`, { headers: { cookie } });
        if (res.status === 200) return (await res.json()) as { slabs: number };
        expect(res.status).toBe(503);
        return undefined;
      },
      90_000,
      200,
    );
    expect(body.slabs).toBeGreaterThan(0);
    // The thread's log line reached the server's output.
    expect(srv.output()).toContain('"report cache ready"');
  }, 120_000);
});
