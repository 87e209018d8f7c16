/*
 * `npm start` runs the compiled server (build/server/*.js from `npm run build:server`) with plain
 * Node, no TypeScript loader at run time. The suite builds it first (`npm test` runs `npm run build`).
 * Here it starts under the supervisor as in production, answers, migrates and seeds from the project
 * folder, serves the client, and imports through its compiled import thread.
 */
import fs from "node:fs";
import path from "node:path";
import Database from "better-sqlite3";
import { afterEach, describe, expect, it } from "vitest";
import { csv, HEAT_FILE_HEADERS, heatFileRow } from "../helpers/workbooks";
import { disposeServer, REPO_ROOT, startServer, type ServerProcess } from "../helpers/server-process";

const servers: ServerProcess[] = [];
afterEach(async () => {
  while (servers.length) await disposeServer(servers.pop()!);
});

describe("the compiled server", () => {
  it("when npm start's compiled supervisor runs the compiled server, then it signs in, serves the client, and an import runs in its compiled thread", async () => {
    for (const file of ["index.js", "supervisor.js", "import-worker.js"]) {
      expect(fs.existsSync(path.join(REPO_ROOT, "build/server", file)), `${file}: run npm run build:server`).toBe(true);
    }
    const srv = await startServer({ entry: "supervisor", compiled: true });
    servers.push(srv);
    // No TypeScript loader in the server process: the supervisor started build/server/index.js.
    expect(srv.output()).not.toMatch(/tsx/);
    const cookie = await srv.signIn("process@demo.test");
    const me = await fetch(`${srv.baseUrl}/api/me`, { headers: { cookie } });
    expect(((await me.json()) as { email: string }).email).toBe("process@demo.test");
    const page = await fetch(`${srv.baseUrl}/yard`);
    expect(page.status).toBe(200);
    expect(await page.text()).toMatch(/<div id="root"><\/div>/);

    const rows = Array.from({ length: 40 }, (_, i) => heatFileRow("CMP", i));
    const form = new FormData();
    form.append("file", new Blob([new Uint8Array(csv(HEAT_FILE_HEADERS, rows))], { type: "text/csv" }), "compiled-heats.csv");
    const res = await fetch(`${srv.baseUrl}/api/import/heats`, { method: "POST", headers: { cookie, origin: srv.baseUrl }, body: form });
    const body = (await res.json()) as { rows: number; counts: { created: number } };
    expect(res.status, JSON.stringify(body).slice(0, 400)).toBe(201);
    expect(body.rows).toBe(40);
    expect(body.counts.created).toBe(40);
    const db = new Database(srv.files.databaseFile, { readonly: true });
    try {
      expect(db.prepare("select count(*) from heats where heat_no like 'CMP%'").pluck().get()).toBe(40);
    } finally {
      db.close();
    }
  }, 120_000);
});
