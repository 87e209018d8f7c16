/*
 * The compiled server (build/server from `npm run build:server`, as `npm start` runs it) starts its
 * compiled report thread (build/server/report-thread.js): a fact report is worked out there and
 * answered, after the "warming up" answers of the start, with no TypeScript loader in the process.
 * Its screenings are shared out over compiled helper threads (build/server/screening-helper.js)
 * when the plant is large enough (here: from one slab on), with the same answer.
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

  it("when the compiled server is asked for screenings with sharing on, then its compiled helper thread works some of the tests and every answer is the one the report thread gives alone", async () => {
    expect(fs.existsSync(path.join(REPO_ROOT, "build/server/screening-helper.js")), "screening-helper.js: run npm run build:server").toBe(true);
    const srv = await startServer({
      entry: "supervisor",
      compiled: true,
      env: { LOG_LEVEL: "debug", SCREENING_THREADS: "1", SCREENING_SHARED_FROM: "1" },
    });
    servers.push(srv);
    const cookie = await srv.signIn("quality@demo.test");
    const bodies: { byHelpers: number; body: string }[] = [];
    /** The log lines of the report thread about the screenings worked so far. */
    const worked = () =>
      srv
        .output()
        .split("\n")
        .filter((l) => l.includes('"screening worked"'))
        .map((l) => JSON.parse(l) as { threads: number; byHelpers: number; failedOver: number });
    await waitFor(
      "a screening the helper took part in",
      async () => {
        const res = await fetch(`${srv.baseUrl}/api/reports/screening?defectType=SLG`, { headers: { cookie } });
        if (res.status === 503) return undefined;
        expect(res.status).toBe(200);
        const body = await res.text();
        const line = await waitFor("the report thread's line about it", () => worked()[bodies.length], 10_000);
        expect(line.threads).toBe(2);
        expect(line.failedOver).toBe(0);
        bodies.push({ byHelpers: line.byHelpers, body });
        if (line.byHelpers > 0) return true;
        // The same screening on the same data would be the answer kept (report-answers.ts): a write
        // that changes nothing it reads (a saved report) has the next one worked out again.
        const saved = await fetch(`${srv.baseUrl}/api/saved-reports`, {
          method: "POST",
          headers: { cookie, "content-type": "application/json", origin: srv.baseUrl },
          body: JSON.stringify({ name: `attempt ${bodies.length}`, reportKind: "screening", query: "defectType=SLG" }),
        });
        expect(saved.status).toBe(201);
        return undefined;
      },
      90_000,
      100,
    );
    expect(srv.output()).not.toMatch(/tsx/);
    // Every answer the same, whoever worked which test.
    for (const b of bodies) expect(b.body).toBe(bodies[0]!.body);
    expect((JSON.parse(bodies[0]!.body) as { variables: unknown[] }).variables.length).toBeGreaterThan(20);

    // And the same as the report thread alone gives: the server again on the same files, without helpers.
    srv.kill("SIGTERM");
    await srv.waitExit();
    const alone = await startServer({ entry: "supervisor", compiled: true, files: srv.files, env: { LOG_LEVEL: "debug", SCREENING_THREADS: "0" } });
    servers.push(alone);
    const cookieAlone = await alone.signIn("quality@demo.test");
    const body = await waitFor(
      "the screening without helpers",
      async () => {
        const res = await fetch(`${alone.baseUrl}/api/reports/screening?defectType=SLG`, { headers: { cookie: cookieAlone } });
        if (res.status === 503) return undefined;
        expect(res.status).toBe(200);
        return res.text();
      },
      90_000,
      100,
    );
    expect(body).toBe(bodies[0]!.body);
    const line = await waitFor("the report thread's line about it", () =>
      alone
        .output()
        .split("\n")
        .find((l) => l.includes('"screening worked"')),
    );
    expect(JSON.parse(line)).toMatchObject({ threads: 1, byHelpers: 0 });
  }, 180_000);
});
