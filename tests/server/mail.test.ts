import net from "node:net";
import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startFakeSmtp } from "../../server/mail/fake-smtp";
import { backoffMs, createMailer, MAIL_PARALLEL, MAIL_PER_PASS, MAX_ATTEMPTS } from "../../server/mail/mailer";
import { createLogger } from "../../server/lib/logger";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";
import { freePort } from "../helpers/ports";

/**
 * The mail path end to end: the queue in SQLite, nodemailer over a real SMTP connection, and the
 * local fake SMTP server (smtp-server + mailparser) storing what arrived in mail_received.
 */
let t: TestApp;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.01, fakeSmtp: true });
});
afterAll(() => t?.close());

const O = () => t.env.BETTER_AUTH_URL;
const rows = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).all(...a) as Record<string, any>[];
const one = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).get(...a) as Record<string, any>;

describe("the mail path", () => {
  it("when an inspector logs a critical defect, then the entry is saved at once, a message to the quality engineers is queued, travels over SMTP, and the outbox shows it sent and received", async () => {
    const inspector = await t.agentFor("inspector");
    const slab = one("select slab_id from slabs order by id limit 1 offset 3").slab_id as string;
    const res = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send({
        slab_id: slab,
        type_code: "LFC",
        face: "inner",
        position_along_mm: 1200,
        position_across_mm: 600,
        severity: 4,
        stage: "slab_yard",
        disposition: "hold",
        note: "Deep crack across the corner",
        client_key: `mail-test-${Date.now()}`,
      });
    expect(res.status).toBe(201);
    const queued = one("select * from email_outbox where kind = 'critical_defect' order by id desc limit 1");
    expect(queued.status).toBe("queued");
    const quality = rows("select email from user where role like '%quality%' and coalesce(banned, 0) = 0")
      .map((r) => r.email)
      .sort();
    expect(queued.to_addresses.split(", ").sort()).toEqual(quality);
    expect(queued.subject).toBe(`Critical defect on slab ${slab}: LFC Longitudinal facial crack`);

    const pass = await t.mailer.processDue();
    expect(pass.sent).toBeGreaterThanOrEqual(1);
    const sent = one("select * from email_outbox where id = ?", queued.id);
    expect(sent.status).toBe("sent");
    expect(sent.attempts).toBe(1);
    const received = one("select * from mail_received where message_id = ?", sent.message_id);
    expect(received.subject).toBe(queued.subject);
    expect(received.envelope_to.split(", ").sort()).toEqual(quality);
    expect(received.text_body).toContain(`/slabs/${slab}`);
    expect(received.text_body).toContain("Deep crack across the corner");
    // In the screens' words, not the stored keys.
    expect(received.text_body).toContain("LFC Longitudinal facial crack, Inner radius (top) face, 1200 mm from the head end");
    expect(received.text_body).toContain("Disposition proposed: Hold for decision");
    expect(received.raw).toContain("Subject: Critical defect on slab");

    const admin = await t.agentFor("admin");
    const outbox = await admin.get("/api/admin/outbox?kind=critical_defect");
    expect(outbox.status).toBe(200);
    expect(outbox.body.items[0]).toMatchObject({ id: queued.id, status: "sent", received: true, subject: queued.subject, from: t.env.MAIL_FROM });
    expect(outbox.body.transport).toContain("local fake SMTP server");
  });

  it("when the SMTP server is down, then the message stays queued with the error, waits its backoff, and goes out once the server is back", async () => {
    // What the demo plant has queued by now (its actions' overdue reminders, more of them as the
    // calendar passes their due dates) goes out first through the working server: a pass over the
    // down server then tries this message alone, whatever the date.
    await t.mailer.processDue();
    expect(one("select count(*) as n from email_outbox where status = 'queued'").n).toBe(0);
    const port = await freePort();
    const logger = createLogger("silent");
    const mailer = createMailer({
      db: t.db,
      logger,
      smtpUrl: `smtp://127.0.0.1:${port}`,
      from: "Strandsight <test@plant.invalid>",
      dir: `${t.dir}/mail-down`,
      describe: "test",
    });
    const id = mailer.enqueue({
      kind: "action_assigned",
      to: ["process@demo.test"],
      subject: "Retry test",
      text: "Sent when the server is back.",
      attachments: [{ filename: "note.txt", contentType: "text/plain", content: Buffer.from("attached") }],
    })!;
    const t0 = Date.now();
    await mailer.processDue(t0);
    let row = one("select * from email_outbox where id = ?", id);
    expect(row.status).toBe("queued");
    expect(row.attempts).toBe(1);
    expect(row.last_error).toMatch(/ECONNREFUSED|connect/i);
    expect(row.next_attempt_at).toBeGreaterThanOrEqual(t0 + backoffMs(1));
    expect(backoffMs(1)).toBe(30_000);
    expect(backoffMs(2)).toBe(60_000);

    // Not yet due: nothing is tried.
    await mailer.processDue(t0 + 1_000);
    expect(one("select attempts from email_outbox where id = ?", id).attempts).toBe(1);

    const fake = await startFakeSmtp({ db: t.db, logger, port });
    try {
      await mailer.processDue(row.next_attempt_at + 1);
      row = one("select * from email_outbox where id = ?", id);
      expect(row.status).toBe("sent");
      expect(row.attempts).toBe(2);
      const got = one("select * from mail_received where message_id = ?", row.message_id);
      expect(got.subject).toBe("Retry test");
      expect(JSON.parse(got.attachments)).toEqual([{ filename: "note.txt", contentType: "text/plain", size: 8 }]);
    } finally {
      await fake.close();
      await mailer.stop();
    }
  });

  it(`when every attempt fails, then after ${MAX_ATTEMPTS} the message is failed, and an admin can put it back in the queue`, async () => {
    const port = await freePort();
    const mailer = createMailer({
      db: t.db,
      logger: createLogger("silent"),
      smtpUrl: `smtp://127.0.0.1:${port}`,
      from: "x@plant.invalid",
      dir: `${t.dir}/mail-fail`,
      describe: "test",
    });
    const id = mailer.enqueue({ kind: "invitation", to: ["nobody@demo.test"], subject: "Never", text: "Never arrives." })!;
    let now = Date.now();
    for (let i = 0; i < MAX_ATTEMPTS; i++) {
      await mailer.processDue(now);
      now += 31 * 60_000;
    }
    await mailer.stop();
    expect(one("select status, attempts from email_outbox where id = ?", id)).toEqual({ status: "failed", attempts: MAX_ATTEMPTS });
    const admin = await t.agentFor("admin");
    const retry = await admin.post(`/api/admin/outbox/${id}/retry`).set("Origin", O());
    expect(retry.status).toBe(200);
    expect(retry.body).toMatchObject({ status: "queued", attempts: 0 });
    const again = await admin.post(`/api/admin/outbox/${id}/retry`).set("Origin", O());
    expect(again.status).toBe(409);
  });
});

describe("password reset and invitation through better-auth and the fake mail", () => {
  /** The link in the newest received message to this address. */
  function linkFor(email: string): string {
    const r = one("select text_body from mail_received where envelope_to = ? order by id desc limit 1", email);
    const m = /(https?:\/\/\S+\/api\/auth\/reset-password\/\S+)/.exec(r.text_body);
    expect(m, r.text_body).not.toBeNull();
    return m![1]!;
  }

  it("when a user asks for a reset, then a mail with a link arrives, the link leads to the reset page with a token, the new password works and the old one no longer does", async () => {
    const anon = request(t.app);
    const ask = await anon.post("/api/auth/request-password-reset").set("Origin", O()).send({ email: "claims@demo.test", redirectTo: "/reset-password" });
    expect(ask.status).toBe(200);
    // An unknown address gets the same answer, and no mail.
    const before = rows("select id from email_outbox").length;
    const unknown = await anon.post("/api/auth/request-password-reset").set("Origin", O()).send({ email: "nobody@demo.test", redirectTo: "/reset-password" });
    expect(unknown.status).toBe(200);
    expect(rows("select id from email_outbox").length).toBe(before);

    await t.mailer.processDue();
    const mail = one("select * from email_outbox where kind = 'password_reset' order by id desc limit 1");
    expect(mail).toMatchObject({ status: "sent", to_addresses: "claims@demo.test", subject: "Reset your Strandsight password" });

    const url = new URL(linkFor("claims@demo.test"));
    const follow = await anon.get(url.pathname + url.search);
    expect(follow.status).toBe(302);
    const to = new URL(follow.headers.location!, O());
    expect(to.pathname).toBe("/reset-password");
    const token = to.searchParams.get("token")!;
    expect(token.length).toBeGreaterThan(10);

    const weak = await anon.post("/api/auth/reset-password").set("Origin", O()).send({ newPassword: "short", token });
    expect(weak.status).toBe(400);
    const reset = await anon.post("/api/auth/reset-password").set("Origin", O()).send({ newPassword: "a-new-long-password", token });
    expect(reset.status).toBe(200);
    const newSignIn = await request(t.app)
      .post("/api/auth/sign-in/email")
      .set("Origin", O())
      .send({ email: "claims@demo.test", password: "a-new-long-password" });
    expect(newSignIn.status).toBe(200);
    const oldSignIn = await request(t.app).post("/api/auth/sign-in/email").set("Origin", O()).send({ email: "claims@demo.test", password: TEST_PASSWORD });
    expect(oldSignIn.status).toBe(401);
    // The token is spent.
    const reuse = await anon.post("/api/auth/reset-password").set("Origin", O()).send({ newPassword: "yet-another-password", token });
    expect(reuse.status).toBe(400);
  });

  it("when an admin creates a user, then an invitation with a link to choose a password reaches them, and the link sets it", async () => {
    const admin = await t.agentFor("admin");
    // The invitation way: no password from the administrator (a first password sends no mail: first-sign-in.test.ts).
    const created = await admin
      .post("/api/admin/users")
      .set("Origin", O())
      .send({ name: "Nadia Okafor (demo)", email: "nadia@demo.test", roles: ["inspector"], firstSignIn: "invitation" });
    expect(created.status).toBe(201);
    await t.mailer.processDue();
    const mail = one("select * from email_outbox where to_addresses = 'nadia@demo.test'");
    expect(mail).toMatchObject({ kind: "invitation", status: "sent", subject: "Your Strandsight account" });
    expect(one("select text_body from mail_received where envelope_to = 'nadia@demo.test'").text_body).toContain(
      "an administrator has created a Strandsight account for you",
    );
    const url = new URL(linkFor("nadia@demo.test"));
    const token = new URL((await request(t.app).get(url.pathname + url.search)).headers.location!, O()).searchParams.get("token")!;
    const set = await request(t.app).post("/api/auth/reset-password").set("Origin", O()).send({ newPassword: "nadia-chose-this", token });
    expect(set.status).toBe(200);
    const signIn = await request(t.app).post("/api/auth/sign-in/email").set("Origin", O()).send({ email: "nadia@demo.test", password: "nadia-chose-this" });
    expect(signIn.status).toBe(200);
  });
});

describe("a backlog and a mail server that hangs", () => {
  // Its own database: the queue of the file's other tests must not mix into these counts.
  let b: TestApp;
  beforeAll(async () => {
    b = await createTestApp({ scale: 0.01, fakeSmtp: true });
    // The demo plant's own messages (its overdue actions' reminders, queued by the first pass and due
    // from the moment they were queued) go out first, so the counts below are ours.
    await b.mailer.processDue();
    await b.mailer.processDue(Date.now() + 1_000);
  });
  afterAll(() => b?.close());
  const q = (sql: string, ...a: unknown[]) => b.db.$client.prepare(sql).all(...a) as Record<string, any>[];

  it(`when ${MAIL_PER_PASS + 20} notices wait and someone asks for a password reset, then the next pass sends the reset link first, ${MAIL_PARALLEL} at a time, and the next pass the rest`, async () => {
    expect(q("select count(*) as n from email_outbox where status != 'sent'")[0]!.n).toBe(0);
    const backlog = Array.from({ length: MAIL_PER_PASS + 20 }, (_, i) =>
      b.mailer.enqueue({ kind: "action_overdue", to: ["process@demo.test"], subject: `Backlog notice ${i + 1}`, text: "Backlog." })!,
    );
    const ask = await request(b.app)
      .post("/api/auth/request-password-reset")
      .set("Origin", b.env.BETTER_AUTH_URL)
      .send({ email: "quality@demo.test", redirectTo: "/reset-password" });
    expect(ask.status).toBe(200);
    const reset = q("select id from email_outbox where kind = 'password_reset'");
    expect(reset.length).toBe(1);
    // The reset link is the newest message of all.
    expect(reset[0]!.id).toBeGreaterThan(Math.max(...backlog));

    const first = await b.mailer.processDue();
    expect(first).toEqual({ sent: MAIL_PER_PASS, retried: 0, deferred: 0 });
    expect(q("select status from email_outbox where id = ?", reset[0]!.id)[0]!.status).toBe("sent");
    expect(q("select count(*) as n from mail_received where envelope_to = 'quality@demo.test' and subject = 'Reset your Strandsight password'")[0]!.n).toBe(1);
    // Behind it, the oldest notices; the newest wait for the next pass.
    const waiting = q("select id from email_outbox where status = 'queued' order by id").map((r) => r.id as number);
    expect(waiting).toEqual(backlog.slice(MAIL_PER_PASS - 1));

    const second = await b.mailer.processDue();
    expect(second).toEqual({ sent: 21, retried: 0, deferred: 0 });
    expect(q("select count(*) as n from email_outbox where status != 'sent'")[0]!.n).toBe(0);
    expect(q("select count(*) as n from mail_received where subject like 'Backlog notice %'")[0]!.n).toBe(backlog.length);
  });

  it("when passes are asked for while one is still sending, then they wait their turn and every message arrives exactly once", async () => {
    const ids = Array.from({ length: 7 }, (_, i) =>
      b.mailer.enqueue({ kind: "action_assigned", to: ["process@demo.test"], subject: `Once only ${i + 1}`, text: "Exactly once." })!,
    );
    // The first pass finds nothing due (its clock is in the past); two more arrive while it runs.
    const passes = await Promise.all([b.mailer.processDue(0), b.mailer.processDue(), b.mailer.processDue()]);
    expect(passes.reduce((n, p) => n + p.sent, 0)).toBe(ids.length);
    expect(q("select count(*) as n from mail_received where subject like 'Once only %'")[0]!.n).toBe(ids.length);
    expect(q(`select count(*) as n from email_outbox where id in (${ids.join(",")}) and status = 'sent' and attempts = 1`)[0]!.n).toBe(ids.length);
  });

  it("when the mail server accepts connections and never answers, then each pass tries the reset link and invitation first, three at once, waits one short timeout, and every message of a backlog of 7 gets an attempt within 3 passes with the failure in words", async () => {
    // A real TCP server that accepts and never says a word (a hung mail server).
    const sockets = new Set<net.Socket>();
    let open = 0;
    let mostOpen = 0;
    let connections = 0;
    const hung = net.createServer((s) => {
      sockets.add(s);
      connections++;
      mostOpen = Math.max(mostOpen, ++open);
      s.on("error", () => undefined);
      s.once("close", () => (open--, sockets.delete(s)));
    });
    await new Promise<void>((r) => hung.listen(0, "127.0.0.1", r));
    const port = (hung.address() as net.AddressInfo).port;
    const mailer = createMailer({
      db: b.db,
      logger: createLogger("silent"),
      smtpUrl: `smtp://127.0.0.1:${port}`,
      from: "Strandsight <test@plant.invalid>",
      dir: `${b.dir}/mail-hung`,
      describe: "a hung server",
      timeouts: { connectionMs: 2_000, greetingMs: 300, socketMs: 2_000 },
    });
    try {
      expect(q("select count(*) as n from email_outbox where status != 'sent'")[0]!.n).toBe(0);
      const ids: number[] = [];
      for (let i = 1; i <= 5; i++) ids.push(mailer.enqueue({ kind: "action_assigned", to: ["process@demo.test"], subject: `Action ${i}`, text: "Backlog." })!);
      const resetId = mailer.enqueue({ kind: "password_reset", to: ["claims@demo.test"], subject: "Reset your Strandsight password", text: "A link." })!;
      const inviteId = mailer.enqueue({ kind: "invitation", to: ["new.hire@demo.test"], subject: "Your Strandsight account", text: "A link." })!;
      const attempted = () => q("select id from email_outbox where attempts > 0 and id >= ? order by id", ids[0]).map((r) => r.id as number);
      const now = Date.now();

      // Pass 1: the two links and the oldest notice, on three connections at once; the other four wait.
      expect(await mailer.processDue(now)).toEqual({ sent: 0, retried: 3, deferred: 4 });
      expect(attempted()).toEqual([ids[0], resetId, inviteId]);
      expect(connections).toBe(3);
      expect(mostOpen).toBe(3);
      // Pass 2 and 3: the rest, the oldest first.
      expect(await mailer.processDue(now)).toEqual({ sent: 0, retried: 3, deferred: 1 });
      expect(attempted()).toEqual([...ids.slice(0, 4), resetId, inviteId]);
      expect(await mailer.processDue(now)).toEqual({ sent: 0, retried: 1, deferred: 0 });
      expect(connections).toBe(7);

      const rows = q("select status, attempts, last_error, next_attempt_at from email_outbox where id in (" + [...ids, resetId, inviteId].join(",") + ")");
      expect(rows.length).toBe(7);
      for (const r of rows) {
        expect(r.status).toBe("queued");
        expect(r.attempts).toBe(1);
        expect(r.next_attempt_at).toBeGreaterThanOrEqual(now + backoffMs(1));
        expect(r.last_error).toBe(
          `The mail server at 127.0.0.1:${port} accepted the connection but did not answer within 0.3 s (it may be hung or overloaded). (Greeting never received)`,
        );
      }
      // Nothing more is due until the backoff has passed.
      expect(await mailer.processDue(now)).toEqual({ sent: 0, retried: 0, deferred: 0 });
    } finally {
      await mailer.stop();
      for (const s of sockets) s.destroy();
      await new Promise<void>((r) => hung.close(() => r()));
    }
  });
});
