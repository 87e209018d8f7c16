import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type request from "supertest";
import { queueOverdueReminders, todayIso } from "../../server/services/investigations.service";
import { createNotifications } from "../../server/mail/notifications";
import { createLogger } from "../../server/lib/logger";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
let process_: request.Agent;
let quality: request.Agent;
let inspector: request.Agent;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.02 });
  process_ = await t.agentFor("process");
  quality = await t.agentFor("quality");
  inspector = await t.agentFor("inspector");
});
afterAll(() => t?.close());

const O = () => t.env.BETTER_AUTH_URL;
const one = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).get(...a) as Record<string, any>;
const n = (sql: string, ...a: unknown[]) =>
  t.db.$client
    .prepare(sql)
    .pluck()
    .get(...a) as number;
const userId = (role: string) => one("select id from user where email = ?", `${role}@demo.test`).id as string;
const DAY = 86_400_000;

describe("investigations", () => {
  let id: number;
  const heatNo = () => one("select heat_no from heats order by id limit 1 offset 5").heat_no as string;
  const defectId = () => n("select id from defects where deleted_at is null order by id limit 1 offset 7");

  it("when a process engineer opens one on a heat and a defect, then it gets a reference, its subjects and participants, and the audit has it", async () => {
    const res = await process_
      .post("/api/investigations")
      .set("Origin", O())
      .send({
        title: "Slag spots on the wide grades",
        problemStatement: "Slag spots rose on the wide grades after the tundish change.",
        heatNos: [heatNo()],
        defectIds: [defectId()],
        participantIds: [userId("quality")],
      });
    expect(res.status).toBe(201);
    id = res.body.id;
    const year = new Date().getUTCFullYear();
    expect(res.body.ref).toMatch(new RegExp(`^INV-${year}-\\d{3}$`));
    expect(res.body).toMatchObject({
      status: "open",
      defects: 1,
      heats: 1,
      owner: { email: "process@demo.test" },
      participants: [{ email: "quality@demo.test" }],
    });
    expect(res.body.subjects.heats[0].heatNo).toBe(heatNo());
    expect(res.body.subjects.defects[0].id).toBe(defectId());
    expect(n("select count(*) from audit_log where entity = 'investigation' and entity_id = ? and action = 'investigation.open'", String(id))).toBe(1);
  });

  it("when the demo's investigations are read, then they carry the same kind of reference as a new one, and their hypotheses and history are dated as the work happened", async () => {
    const seeded = t.db.$client
      .prepare("select id, ref, opened_at, closed_at from investigations where ref not in (select ref from investigations where id = ?) order by id")
      .all(id) as {
      id: number;
      ref: string;
      opened_at: number;
      closed_at: number | null;
    }[];
    expect(seeded.map((x) => x.ref)).toEqual(["INV-2026-001", "INV-2026-002", "INV-2026-003"]);
    // The new one follows them in the same year rather than starting a second "001".
    expect(one("select ref from investigations where id = ?", id).ref).toBe(
      `INV-${new Date().getUTCFullYear()}-${new Date().getUTCFullYear() === 2026 ? "004" : "001"}`,
    );
    for (const inv of seeded) {
      const body = (await process_.get(`/api/investigations/${inv.id}`)).body;
      expect(body.history.length).toBeGreaterThan(0);
      expect(body.history[0]).toMatchObject({ action: "investigation.open", at: new Date(inv.opened_at).toISOString() });
      for (const h of body.hypotheses) {
        const at = Date.parse(h.createdAt);
        expect(at).toBeGreaterThanOrEqual(inv.opened_at);
        expect(at).toBeLessThanOrEqual(inv.closed_at ?? inv.opened_at + 30 * DAY);
      }
    }
    const second = (await process_.get(`/api/investigations/${seeded[1]!.id}`)).body;
    expect(second.history.map((h: { action: string }) => h.action)).toEqual([
      "investigation.open",
      "investigation.hypothesis.add",
      "investigation.action.add",
      "investigation.action.add",
    ]);
  });

  it("when a quality engineer reads it, then it is open to them, but they cannot change it", async () => {
    expect((await quality.get(`/api/investigations/${id}`)).status).toBe(200);
    const res = await quality.post(`/api/investigations/${id}/hypotheses`).set("Origin", O()).send({ statement: "Quality guesses" });
    expect(res.status).toBe(403);
    expect((await inspector.get("/api/investigations")).status).toBe(403);
  });

  it("when subjects are unknown, then 400 names them and nothing is opened", async () => {
    const before = n("select count(*) from investigations");
    const res = await process_
      .post("/api/investigations")
      .set("Origin", O())
      .send({ title: "Bad", problemStatement: "This one names heats that do not exist.", heatNos: ["NOHEAT1", "NOHEAT2"] });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toBe("No heat NOHEAT1, NOHEAT2 on record.");
    expect(n("select count(*) from investigations")).toBe(before);
  });

  it("when an action is given to an owner with a due date in the past, then the owner is e-mailed, the list counts it overdue, and one reminder is queued once", async () => {
    const res = await process_
      .post(`/api/investigations/${id}/hypotheses`)
      .set("Origin", O())
      .send({ statement: "SEN clogging lets slag through", causeTag: "sen-clogging" });
    expect(res.body.hypotheses[0]).toMatchObject({ causeTag: "sen-clogging", status: "open" });
    const hid = res.body.hypotheses[0].id;
    const supported = await process_.patch(`/api/investigations/${id}/hypotheses/${hid}`).set("Origin", O()).send({ status: "supported" });
    expect(supported.body.hypotheses[0].status).toBe("supported");

    const past = todayIso(Date.now() - 3 * DAY);
    const act = await process_
      .post(`/api/investigations/${id}/actions`)
      .set("Origin", O())
      .send({ description: "Inspect the SEN of strand 1 at the next change", ownerId: userId("quality"), dueOn: past });
    expect(act.status).toBe(200);
    expect(act.body.actionList[0]).toMatchObject({ overdue: true, status: "open", owner: { email: "quality@demo.test" } });
    const assigned = one("select * from email_outbox where kind = 'action_assigned' order by id desc limit 1");
    expect(assigned.to_addresses).toBe("quality@demo.test");
    expect(assigned.text_body).toContain("Inspect the SEN of strand 1");

    const list = await quality.get("/api/investigations?status=active");
    const mine = list.body.items.find((i: { id: number }) => i.id === id);
    expect(mine.actions).toEqual({ total: 1, open: 1, overdue: 1 });

    const notify = createNotifications({ db: t.db, mailer: t.mailer, baseUrl: O(), logger: createLogger("silent") });
    // Every overdue action not yet reminded (the demo plant has some too) gets one reminder, once.
    const waiting = n(
      "select count(*) from investigation_actions a join investigations i on i.id = a.investigation_id where i.status <> 'closed' and a.status in ('open', 'in_progress') and a.due_on < ? and a.overdue_notified_at is null",
      todayIso(),
    );
    expect(waiting).toBeGreaterThanOrEqual(1);
    expect(queueOverdueReminders(t.db, notify)).toBe(waiting);
    expect(queueOverdueReminders(t.db, notify)).toBe(0);
    const reminder = one("select * from email_outbox where kind = 'action_overdue' and text_body like '%Inspect the SEN of strand 1%'");
    expect(reminder.to_addresses).toBe("quality@demo.test");
    expect(reminder.subject).toContain(`was due ${past}`);

    const done = await process_.patch(`/api/investigations/${id}/actions/${act.body.actionList[0].id}`).set("Origin", O()).send({ status: "done" });
    expect(done.body.actionList[0]).toMatchObject({ status: "done", overdue: false });
    expect(done.body.actions.overdue).toBe(0);
  });

  it("when files are attached, then allowed ones are stored by id and served to readers; a file of another kind is refused and nothing is stored", async () => {
    const png = await sharp({ create: { width: 6, height: 6, channels: 3, background: "#357" } })
      .png()
      .toBuffer();
    const res = await process_
      .post(`/api/investigations/${id}/attachments`)
      .set("Origin", O())
      .attach("files", png, "mould-photo.png")
      .attach("files", Buffer.from("time,level\n10:00,3.1\n"), "levels.csv");
    expect(res.status).toBe(200);
    expect(res.body.attachments.map((a: { fileName: string; mime: string }) => [a.fileName, a.mime])).toEqual([
      ["mould-photo.png", "image/png"],
      ["levels.csv", "text/csv"],
    ]);
    const a = res.body.attachments[0];
    const file = await quality.get(a.url).buffer(true);
    expect(file.status).toBe(200);
    expect(file.headers["content-type"]).toBe("image/png");
    expect(Buffer.compare(file.body as Buffer, png)).toBe(0);
    expect(file.headers["content-disposition"]).toContain('filename="mould-photo.png"');
    expect((await inspector.get(a.url)).status).toBe(403);

    const dir = path.join(t.env.UPLOAD_DIR, "attachments");
    const filesBefore = fs.readdirSync(dir).length;
    const rowsBefore = n("select count(*) from attachments");
    const exe = Buffer.concat([Buffer.from("MZ"), Buffer.alloc(200, 0), Buffer.from("This program cannot be run in DOS mode")]);
    const bad = await process_
      .post(`/api/investigations/${id}/attachments`)
      .set("Origin", O())
      .attach("files", png, "ok.png")
      .attach("files", exe, "report.pdf");
    expect(bad.status).toBe(415);
    expect(bad.body.error.message).toContain("report.pdf");
    expect(fs.readdirSync(dir).length).toBe(filesBefore);
    expect(n("select count(*) from attachments")).toBe(rowsBefore);
  });

  it("when it is closed with the confirmed cause, then everyone who followed it is e-mailed, it shows the cause, and it no longer changes", async () => {
    const res = await process_
      .post(`/api/investigations/${id}/close`)
      .set("Origin", O())
      .send({ confirmedCause: "sen-clogging", closureNote: "Clogged SEN found and replaced; spots stopped." });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      status: "closed",
      confirmedCause: { code: "sen-clogging", name: "SEN clogging" },
      closureNote: "Clogged SEN found and replaced; spots stopped.",
    });
    const mail = one("select * from email_outbox where kind = 'investigation_closed' order by id desc limit 1");
    // Owner and opener (process), the participant and the action's owner (quality).
    expect(mail.to_addresses.split(", ").sort()).toEqual(["process@demo.test", "quality@demo.test"]);
    expect(mail.subject).toBe(`Investigation ${res.body.ref} closed: SEN clogging`);
    const late = await process_.post(`/api/investigations/${id}/hypotheses`).set("Origin", O()).send({ statement: "Too late for this" });
    expect(late.status).toBe(409);
    const history = (await quality.get(`/api/investigations/${id}`)).body.history.map((h: { action: string }) => h.action);
    expect(history).toEqual([
      "investigation.open",
      "investigation.hypothesis.add",
      "investigation.hypothesis.update",
      "investigation.action.add",
      "investigation.action.update",
      "investigation.attachments.add",
      "investigation.close",
    ]);
  });

  it("when it is closed with actions still open, then those are cancelled with it (each in its record) and the finished one stays done", async () => {
    const opened = await process_
      .post("/api/investigations")
      .set("Origin", O())
      .send({ title: "Corner cracks after the speed change", problemStatement: "Corner cracks rose after the speed change on strand 2.", heatNos: [heatNo()] });
    expect(opened.status).toBe(201);
    const inv = opened.body.id as number;
    const add = (description: string) =>
      process_
        .post(`/api/investigations/${inv}/actions`)
        .set("Origin", O())
        .send({ description, ownerId: userId("quality"), dueOn: todayIso() });
    await add("Check the spray nozzles of segment 2");
    await add("Review the taper of the mold");
    const both = (await add("Log the mold level for a week")).body.actionList as { id: number }[];
    await process_.patch(`/api/investigations/${inv}/actions/${both[0]!.id}`).set("Origin", O()).send({ status: "done" });
    await process_.patch(`/api/investigations/${inv}/actions/${both[1]!.id}`).set("Origin", O()).send({ status: "in_progress" });
    const closed = await process_
      .post(`/api/investigations/${inv}/close`)
      .set("Origin", O())
      .send({ confirmedCause: "sen-clogging", closureNote: "Nozzles were blocked; cleaned and checked." });
    expect(closed.status).toBe(200);
    expect(closed.body.actionList.map((a: { status: string }) => a.status)).toEqual(["done", "cancelled", "cancelled"]);
    expect(closed.body.actions).toMatchObject({ total: 3, open: 0, overdue: 0 });
    const history = closed.body.history.map((h: { action: string }) => h.action);
    expect(history.slice(history.indexOf("investigation.close"))).toEqual([
      "investigation.close",
      "investigation.action.update",
      "investigation.action.update",
    ]);
  });
});
