/**
 * Issue 14, the write path while reports are read: the reports that read the slab facts run in the
 * report thread (server/services/report-thread.ts), so the main thread keeps answering — a defect
 * being saved no longer waits behind a report's arithmetic. Through the real app and a real SQLite
 * file: the reports' numbers are the same as computed in-process; a report asked for after a write
 * was answered sees it; a refusal made in the thread comes back as the same 400; a thread that dies
 * mid-report gives a 503 in words and a new thread answers the next one. The thread gives an answer
 * again, without working it out, while nothing it reads has changed (report-answers.ts): the answer
 * given again is the one worked out, character for character; a write on any connection (the
 * app's, or another one that tells the server nothing), a change of slab conditions, another
 * language or another question has the report worked out again; a refusal is never kept.
 */
import { once } from "node:events";
import Database from "better-sqlite3";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { rateByVariableQuerySchema, screeningQuerySchema } from "@shared/api/reports";
import { HttpError } from "../../server/lib/http-error";
import { createResolver } from "../../server/services/conditions.service";
import { reportThreadOf, slabFactsChanged } from "../../server/services/report-cache";
import { rateByVariable } from "../../server/services/reports/rate-by-variable";
import { screening } from "../../server/services/reports/screening";
import type { ReportThread } from "../../server/services/report-thread";
import { createTestApp, type TestApp } from "../helpers/test-app";
import { downloadWorkbook } from "../helpers/workbooks";

let t: TestApp;
let quality: Awaited<ReturnType<TestApp["agentFor"]>>;
let inspector: Awaited<ReturnType<TestApp["agentFor"]>>;
let thread: ReportThread;

beforeAll(async () => {
  t = await createTestApp({ scale: 0.1 });
  quality = await t.agentFor("quality");
  inspector = await t.agentFor("inspector");
  thread = t.app.locals.reports as ReportThread;
});
afterAll(async () => {
  await thread?.close();
  await t?.close();
});

const O = () => t.env.BETTER_AUTH_URL;
let keys = 0;
const key = () => `report-thread-${process.pid}-${++keys}`;
const reused = () => thread.stats().reused;

/** A slab with a casting speed and no defect yet. */
function cleanSlab() {
  return t.db.$client
    .prepare(
      `select s.slab_id as slabId, s.id from slabs s join slab_conditions c on c.slab_id = s.id
       where c.casting_speed_m_min is not null and s.id not in (select slab_id from defects) order by s.id desc limit 1`,
    )
    .get() as { slabId: string; id: number };
}
/** A slab's casting speed written and resolved here (the change notice goes to the thread before the next report). */
function setCastingSpeed(id: number, v: number) {
  t.db.$client.prepare("update slabs set casting_speed_m_min = ? where id = ?").run(v, id);
  createResolver(t.db).resolve([id]);
}
const defectOn = (slabId: string, type = "SLG") => ({
  slab_id: slabId,
  type_code: type,
  face: "inner",
  position_along_mm: 100,
  position_across_mm: 50,
  severity: 2,
  stage: "slab_yard",
  disposition: "accept",
  client_key: key(),
});

/** The same report computed on this (main) thread, from facts built here: what the thread must match. */
function inProcess<T>(run: () => T): T {
  slabFactsChanged(t.db);
  return run();
}

describe("reports in the report thread", () => {
  it("when reports are being worked out in the thread, then /api/me and a defect post are answered before the last of them, and every report equals the one computed in-process", async () => {
    const path = "/api/reports/screening?adjustFor=none&defectType=SLG";
    const done: string[] = [];
    const started = once(thread.events, "report-started");
    // Six reports queue in the one thread (it works them out one after another): six questions, so
    // none is an answer kept from the one before (report-answers.ts).
    const paths = ["SLG", "LFC", "SLV"].flatMap((type) =>
      ["cluster", "model"].map((se) => `/api/reports/screening?adjustFor=none&defectType=${type}&se=${se}`),
    );
    const reports = paths.map((p, i) =>
      quality.get(p).then((res) => {
        done.push(`report ${i}`);
        return res;
      }),
    );
    await started;
    const me = inspector.get("/api/me").then((res) => {
      done.push("me");
      return res;
    });
    const post = inspector
      .post("/api/defects")
      .set("Origin", O())
      .send(defectOn(cleanSlab().slabId))
      .then((res) => {
        done.push("post");
        return res;
      });
    const [meRes, postRes] = await Promise.all([me, post]);
    expect(meRes.status).toBe(200);
    expect(postRes.status).toBe(201);
    // Answered while the thread still had reports to work out: the main thread did not wait for them.
    expect(done).not.toContain("report 5");
    const answered = await Promise.all(reports);
    expect(done.indexOf("me")).toBeLessThan(done.indexOf("report 5"));
    expect(done.indexOf("post")).toBeLessThan(done.indexOf("report 5"));
    for (const res of answered) expect(res.status).toBe(200);

    const last = await quality.get(path);
    const expected = inProcess(() => screening(t.db, screeningQuerySchema.parse({ adjustFor: "none", defectType: "SLG" })));
    expect(JSON.stringify(last.body)).toBe(JSON.stringify(expected));
  }, 120_000);

  it("when a defect post has been answered 201, then a report asked for next counts it; and a slab's conditions written on the main thread are in the next report", async () => {
    const path = "/api/reports/rate-by-variable?variable=casting_speed_m_min&defectType=SLG";
    const before = await quality.get(path);
    expect(before.status).toBe(200);
    const slab = cleanSlab();
    const posted = await inspector.post("/api/defects").set("Origin", O()).send(defectOn(slab.slabId));
    expect(posted.status).toBe(201);
    const after = await quality.get(path);
    expect(after.status).toBe(200);
    expect(after.body.affected).toBe(before.body.affected + 1);
    expect(after.body.slabs).toBe(before.body.slabs);

    // A condition changed and resolved here (the change notice goes to the thread before the next report).
    setCastingSpeed(slab.id, 9.876);
    const moved = await quality.get(`${path}&bins=4`);
    expect(moved.status).toBe(200);
    const expected = inProcess(() => rateByVariable(t.db, rateByVariableQuerySchema.parse({ variable: "casting_speed_m_min", defectType: "SLG", bins: "4" })));
    expect(JSON.stringify(moved.body)).toBe(JSON.stringify(expected));
    expect(Math.max(...moved.body.bins.map((b: { upper: number }) => b.upper))).toBeGreaterThanOrEqual(9.876);
  }, 60_000);

  it("when a report refuses the query in the thread, then the client gets the same 400 with the same words and details as when it was worked out on the main thread", async () => {
    let expected: { code: string; message: string; details: unknown } | null = null;
    try {
      inProcess(() => rateByVariable(t.db, rateByVariableQuerySchema.parse({ variable: "casting_speed_m_min", grade: "NO-SUCH-GRADE" })));
    } catch (err) {
      expect(err).toBeInstanceOf(HttpError);
      const e = err as HttpError;
      expect(e.status).toBe(400);
      expected = { code: e.code, message: e.message, details: e.details };
    }
    expect(expected).not.toBeNull();
    for (const p of [
      "/api/reports/rate-by-variable?variable=casting_speed_m_min&grade=NO-SUCH-GRADE",
      "/api/reports/rate-by-variable.xlsx?variable=casting_speed_m_min&grade=NO-SUCH-GRADE",
    ]) {
      const res = await quality.get(p);
      expect(res.status, p).toBe(400);
      expect(res.body, p).toEqual({ error: expected });
      expect(res.body.error.message).toBe("Unknown grade: NO-SUCH-GRADE.");
    }
  });

  it("when the report thread dies while it works out reports, then those reports answer 503 in words, a new thread starts, and the next report is answered with the same numbers", async () => {
    const path = "/api/reports/screening?adjustFor=none&defectType=LFC";
    const restartsBefore = thread.stats().restarts;
    // A change of every slab: the first report in the thread rebuilds the facts first, then computes.
    slabFactsChanged(t.db);
    const started = once(thread.events, "report-started");
    // (.then: supertest sends a request only once it is awaited or then-ed.) Three questions, so the
    // last is worked out, not an answer kept from the first (report-answers.ts).
    const inFlight = [path, `${path}&se=model`, "/api/reports/screening?adjustFor=none&defectType=SLV"].map((p) => quality.get(p).then((res) => res));
    await started;
    const restarted = once(thread.events, "restarted");
    await thread.kill(); // what running out of its heap does to the thread
    await restarted;
    const answers = await Promise.all(inFlight);
    // The last one waited behind the others in the thread: it cannot have been answered.
    const last = answers[answers.length - 1]!;
    expect(last.status).toBe(503);
    expect(last.body.error.code).toBe("reports_restarted");
    expect(last.body.error.message).toBe(
      "The reports stopped while this one was being worked out and have been started again. Ask for the report again in a moment.",
    );
    expect(last.headers["retry-after"]).toBe("5");
    for (const res of answers) expect([200, 503]).toContain(res.status);
    expect(thread.stats().restarts).toBe(restartsBefore + 1);

    const again = await quality.get(path);
    expect(again.status).toBe(200);
    const expected = inProcess(() => screening(t.db, screeningQuerySchema.parse({ adjustFor: "none", defectType: "LFC" })));
    expect(JSON.stringify(again.body)).toBe(JSON.stringify(expected));
    // Meanwhile the rest of the server answered as ever.
    expect((await inspector.get("/api/me")).status).toBe(200);
  }, 60_000);
});

describe("the report thread's answers given again", () => {
  it("when the same screening is asked again and then as a workbook, then both are the answer worked out, not worked out again, and it equals the one computed in-process", async () => {
    const path = "/api/reports/screening?defectType=SLG";
    // A write first: whatever an earlier request left kept is of another data state.
    expect((await quality.post("/api/saved-reports").set("Origin", O()).send({ name: "first", reportKind: "screening", query: "defectType=SLG" })).status).toBe(
      201,
    );
    const r0 = reused();
    const first = await quality.get(path);
    expect(first.status).toBe(200);
    expect(reused()).toBe(r0);
    const again = await quality.get(path);
    expect(again.status).toBe(200);
    expect(reused()).toBe(r0 + 1);
    expect(again.text).toBe(first.text);
    // Written explicitly, the defaults are the same question (a term list written out is not: the
    // answer says whether its terms were the defaults).
    const explicit = await quality.get(`${path}&se=cluster&rankBy=adjusted`);
    expect(explicit.text).toBe(first.text);
    expect(reused()).toBe(r0 + 2);
    // The workbook of what was just seen: the same answer, given again.
    const wb = await downloadWorkbook(quality, path.replace("screening?", "screening.xlsx?"));
    expect(wb.worksheets.length).toBeGreaterThan(0);
    expect(reused()).toBe(r0 + 3);
    const expected = inProcess(() => screening(t.db, screeningQuerySchema.parse({ defectType: "SLG" })));
    expect(JSON.parse(first.text)).toEqual(JSON.parse(JSON.stringify(expected)));
  }, 60_000);

  it("when a defect is posted, or a defect written by another connection that tells the server nothing, then the next report is worked out again and counts it", async () => {
    const path = "/api/reports/rate-by-variable?variable=casting_speed_m_min&defectType=SLG";
    const before = await quality.get(path);
    expect((await quality.get(path)).text).toBe(before.text);
    const r0 = reused();

    const posted = await inspector.post("/api/defects").set("Origin", O()).send(defectOn(cleanSlab().slabId));
    expect(posted.status).toBe(201);
    const afterPost = await quality.get(path);
    expect(reused()).toBe(r0);
    expect(afterPost.body.affected).toBe(before.body.affected + 1);
    expect((await quality.get(path)).text).toBe(afterPost.text);
    expect(reused()).toBe(r0 + 1);

    // Another connection to the file (another process, a repair by hand): SQLite's data_version moves.
    const other = new Database(t.env.DATABASE_FILE);
    try {
      other
        .prepare(
          `insert into defects (slab_id, type_id, face, severity, stage, disposition, found_at, client_key)
           values (?, (select id from defect_types where code = 'SLG'), 'outer', 1, 'slab_yard', 'accept', ?, ?)`,
        )
        .run(cleanSlab().id, Date.now(), `report-answers-other-${process.pid}`);
    } finally {
      other.close();
    }
    const afterOther = await quality.get(path);
    expect(reused()).toBe(r0 + 1);
    expect(afterOther.body.affected).toBe(afterPost.body.affected + 1);
  }, 60_000);

  it("when a slab's conditions change, then the next report has the new value; the same question in German is its own answer", async () => {
    const path = "/api/reports/rate-by-variable?variable=casting_speed_m_min&bins=4";
    const before = await quality.get(path);
    expect(before.status).toBe(200);
    setCastingSpeed(cleanSlab().id, 9.95);
    const r0 = reused();
    const moved = await quality.get(path);
    expect(reused()).toBe(r0);
    expect(Math.max(...moved.body.bins.map((b: { upper: number }) => b.upper))).toBeGreaterThanOrEqual(9.95);
    expect(Math.max(...before.body.bins.map((b: { upper: number }) => b.upper))).toBeLessThan(9.95);

    const de = await quality.get(path).set("Accept-Language", "de");
    expect(de.status).toBe(200);
    expect(reused()).toBe(r0);
    expect(de.text).not.toBe(moved.text);
    expect((await quality.get(path).set("Accept-Language", "de")).text).toBe(de.text);
    expect((await quality.get(path)).text).toBe(moved.text);
    expect(reused()).toBe(r0 + 2);
  }, 60_000);

  it("when another connection changes a slab's conditions and the notice comes after a report read the old ones, then the next report is worked out again with the new value", async () => {
    const path = "/api/reports/rate-by-variable?variable=casting_speed_m_min&bins=5";
    const id = cleanSlab().id;
    // As the import thread writes: its own connection, the notice after (here: after a report ran).
    const other = new Database(t.env.DATABASE_FILE);
    try {
      other.prepare("update slab_conditions set casting_speed_m_min = 9.97 where slab_id = ?").run(id);
    } finally {
      other.close();
    }
    const stale = await quality.get(path);
    expect(Math.max(...stale.body.bins.map((b: { upper: number }) => b.upper))).toBeLessThan(9.97);
    const r0 = reused();
    // The notice alone, straight to the thread (slabFactsChanged here would also have the risk
    // scoring write, which moves data_version by itself): only the facts' state says it changed.
    reportThreadOf(t.db)!.changed([id]);
    const fresh = await quality.get(path);
    expect(reused()).toBe(r0);
    expect(Math.max(...fresh.body.bins.map((b: { upper: number }) => b.upper))).toBeGreaterThanOrEqual(9.97);
    expect((await quality.get(path)).text).toBe(fresh.text);
    expect(reused()).toBe(r0 + 1);
  }, 60_000);

  it("when a report refuses its query, then the refusal is not kept: asked again, it is worked out again and refused the same way", async () => {
    const path = "/api/reports/rate-by-variable?variable=casting_speed_m_min&grade=NO-SUCH-GRADE";
    const r0 = reused();
    const a = await quality.get(path);
    const b = await quality.get(path);
    expect(a.status).toBe(400);
    expect(b.status).toBe(400);
    expect(b.body).toEqual(a.body);
    expect(reused()).toBe(r0);
  });
});
