import http from "node:http";
import type { AddressInfo } from "node:net";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import { AUTH_BODY_LIMIT } from "../../server/middleware/auth-door";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

/**
 * better-auth serves many endpoints (its admin plugin's list-users, set-role, impersonate-user,
 * ban-user; update-user, change-email, delete-user, …). Only those the client uses are open over
 * HTTP, however the path is spelled, and the body better-auth buffers is capped.
 */
let t: TestApp;
let O: string;
const one = (sql: string, ...args: unknown[]) =>
  t.db.$client
    .prepare(sql)
    .pluck()
    .get(...args) as any;
const idOf = (role: string) => one("select id from user where email = ?", `${role}@demo.test`) as string;

beforeAll(async () => {
  t = await createTestApp({ scale: 0.01, fakeSmtp: true });
  O = t.env.BETTER_AUTH_URL;
});
afterAll(() => t?.close());

/** Every way we know of to write /api/auth/<first>/<rest> so that a URL parser or a router may read it as the real path. */
function spellings(first: string, rest: string): { label: string; path: string }[] {
  return [
    { label: "as is", path: `/api/auth/${first}/${rest}` },
    { label: "./", path: `/api/auth/./${first}/${rest}` },
    { label: "x/../", path: `/api/auth/x/../${first}/${rest}` },
    { label: "%2e/", path: `/api/auth/%2e/${first}/${rest}` },
    { label: "x/%2E%2E/", path: `/api/auth/x/%2E%2E/${first}/${rest}` },
    { label: "x/.%2e/", path: `/api/auth/x/.%2e/${first}/${rest}` },
    { label: "inner ./", path: `/api/auth/${first}/./${rest}` },
    { label: "%2f for the slash", path: `/api/auth/${first}%2f${rest}` },
    { label: "%2F for the slash", path: `/api/auth/${first}%2F${rest}` },
    { label: "double slash", path: `/api/auth//${first}/${rest}` },
    { label: "trailing slash", path: `/api/auth/${first}/${rest}/` },
    { label: "upper case", path: `/api/auth/${first.toUpperCase()}/${rest.toUpperCase()}` },
    { label: "backslashes", path: `/api/auth/x\\..\\${first}/${rest}` },
    { label: "encoded letter", path: `/api/auth/%61${first.slice(1)}/${rest}` },
  ];
}

describe("better-auth's own endpoints over HTTP", () => {
  it("when an administrator calls the auth library's admin endpoints under any spelling, with GET or POST, then each answers 404 in the envelope and nothing changes", async () => {
    const admin = await t.agentFor("admin");
    const inspector = idOf("inspector");
    const adminId = idOf("admin");
    const targets: { rest: string; body: object }[] = [
      { rest: "impersonate-user", body: { userId: inspector } },
      { rest: "set-role", body: { userId: inspector, role: "admin" } },
      { rest: "list-users", body: {} },
      { rest: "ban-user", body: { userId: adminId } },
      { rest: "set-user-password", body: { userId: inspector, newPassword: "taken-over-password" } },
    ];
    const reached: string[] = [];
    let sent = 0;
    for (const { rest, body } of targets) {
      for (const { label, path } of spellings("admin", rest)) {
        for (const method of ["get", "post"] as const) {
          const res = await (method === "get" ? admin.get(path) : admin.post(path).send(body)).set("Origin", O);
          sent++;
          if (res.status !== 404 || res.body?.error?.code !== "not_found" || typeof res.body.error.message !== "string") {
            reached.push(`${method.toUpperCase()} ${path} (${label}) → ${res.status} ${JSON.stringify(res.body).slice(0, 120)}`);
          }
        }
      }
    }
    expect(reached).toEqual([]);
    expect(sent).toBe(targets.length * 14 * 2);
    expect(one("select role from user where id = ?", inspector)).toBe("inspector");
    expect(one("select role from user where id = ?", adminId)).toBe("admin");
    expect(one("select coalesce(banned, 0) from user where id = ?", adminId)).toBe(0);
    expect(one("select count(*) from session where impersonated_by is not null")).toBe(0);
    expect((await admin.get("/api/me")).body.email).toBe("admin@demo.test");
    // The inspector's password is untouched.
    expect((await request(t.app).post("/api/auth/sign-in/email").set("Origin", O).send({ email: "inspector@demo.test", password: TEST_PASSWORD })).status).toBe(
      200,
    );
  });

  it("when a signed-in user posts to update-user under any spelling, then 404, and neither an 8 MiB name nor an administrator's name is taken", async () => {
    const inspector = await t.agentFor("inspector");
    const before = one("select name from user where email = 'inspector@demo.test'");
    const audited = () => one("select count(*) from audit_log where entity_id = ?", idOf("inspector")) as number;
    const auditBefore = audited();
    for (const { label, path } of [
      ...spellings("update-user", "").map((s) => ({ ...s, path: s.path.replace(/\/$/, "") })),
      { label: "with a trailing slash", path: "/api/auth/update-user/" },
    ]) {
      const res = await inspector.post(path).set("Origin", O).send({ name: "Ines Varga (demo administrator)" });
      expect(res.status, `${label}: ${path}`).toBe(404);
      expect(res.body.error.code).toBe("not_found");
    }
    const huge = await inspector
      .post("/api/auth/update-user")
      .set("Origin", O)
      .send({ name: "N".repeat(8 * 1024 * 1024) });
    expect(huge.status).toBe(404);
    // Not even spelled right is the body read: the refusal comes before it.
    expect(huge.body.error.code).toBe("not_found");
    expect(one("select name from user where email = 'inspector@demo.test'")).toBe(before);
    expect(audited()).toBe(auditBefore);
  });

  it('when update-user gets {"name":{}}, then it answers 404 in the envelope (it answered 500)', async () => {
    const inspector = await t.agentFor("inspector");
    const res = await inspector.post("/api/auth/update-user").set("Origin", O).send({ name: {} });
    expect(res.status).toBe(404);
    expect(res.body).toEqual({ error: { code: "not_found", message: "There is no such sign-in route." } });
  });

  it("when the other self-service endpoints are called (change e-mail, change password, delete account, sessions, sign-up), then each answers 404", async () => {
    const claims = await t.agentFor("claims");
    for (const [method, path, body] of [
      ["post", "/api/auth/change-email", { newEmail: "someone-else@demo.test" }],
      ["post", "/api/auth/change-password", { currentPassword: TEST_PASSWORD, newPassword: "another-long-password" }],
      ["post", "/api/auth/delete-user", {}],
      ["get", "/api/auth/list-sessions", undefined],
      ["get", "/api/auth/get-session", undefined],
      ["post", "/api/auth/revoke-sessions", {}],
      ["post", "/api/auth/sign-up/email", { email: "self@demo.test", password: "long-enough-pw", name: "Self" }],
      ["get", "/api/auth/ok", undefined],
    ] as const) {
      const res = await (method === "get" ? claims.get(path) : claims.post(path).send(body)).set("Origin", O);
      expect(res.status, path).toBe(404);
      expect(res.body.error.code, path).toBe("not_found");
    }
    expect(one("select count(*) from user where email in ('someone-else@demo.test', 'self@demo.test')")).toBe(0);
    expect((await claims.get("/api/me")).status).toBe(200);
  });

  it("when a request reaches the auth library past our first fence, then the library's own hook still refuses what is not open, on the path it resolved", async () => {
    // Straight into better-auth's handler: only its before hook stands between the request and the plugin.
    const signIn = await request(t.app).post("/api/auth/sign-in/email").set("Origin", O).send({ email: "admin@demo.test", password: TEST_PASSWORD });
    const cookie = (signIn.headers["set-cookie"] as unknown as string[]).map((c) => c.split(";")[0]).join("; ");
    const call = (path: string, method = "GET", body?: object) =>
      t.auth.handler(
        new Request(`${O}${path}`, {
          method,
          headers: { cookie, origin: O, "content-type": "application/json" },
          body: body ? JSON.stringify(body) : undefined,
        }),
      );
    for (const [path, method, body] of [
      ["/api/auth/admin/list-users", "GET"],
      ["/api/auth/./admin/list-users", "GET"],
      ["/api/auth/x/../admin/list-users", "GET"],
      ["/api/auth/%2e/admin/set-role", "POST", { userId: idOf("inspector"), role: "admin" }],
      ["/api/auth/x/%2E%2E/admin/impersonate-user", "POST", { userId: idOf("inspector") }],
      ["/api/auth/update-user", "POST", { name: "Adam Novak (renamed)" }],
      ["/api/auth/get-session", "GET"],
    ] as const) {
      const res = await call(path, method, body);
      expect(res.status, path).toBe(404);
    }
    expect(one("select role from user where email = 'inspector@demo.test'")).toBe("inspector");
    expect(one("select count(*) from session where impersonated_by is not null")).toBe(0);
    // What is open still works through the same door.
    expect((await call("/api/auth/sign-out", "POST", {})).status).toBe(200);
  });

  it("when our own server code calls the auth library directly, then it still works (the HTTP allowlist does not apply to it)", async () => {
    const signIn = await request(t.app).post("/api/auth/sign-in/email").set("Origin", O).send({ email: "quality@demo.test", password: TEST_PASSWORD });
    const cookie = (signIn.headers["set-cookie"] as unknown as string[]).map((c) => c.split(";")[0]).join("; ");
    const found = await t.auth.api.getSession({ headers: new Headers({ cookie }) });
    expect(found?.user.email).toBe("quality@demo.test");
    const before = one("select count(*) from verification where value = ?", idOf("process"));
    await t.auth.api.requestPasswordReset({ body: { email: "process@demo.test", redirectTo: "/reset-password" } });
    expect(one("select count(*) from verification where value = ?", idOf("process"))).toBe(before + 1);
  });

  it("when the endpoints the app uses are called as the app calls them, then they work (sign-in, sign-out, reset request, reset link)", async () => {
    const agent = request.agent(t.app);
    expect(
      (await agent.post("/api/auth/sign-in/email").set("Origin", O).send({ email: "process@demo.test", password: TEST_PASSWORD, rememberMe: true })).status,
    ).toBe(200);
    expect((await agent.get("/api/me")).status).toBe(200);
    expect((await agent.post("/api/auth/sign-out").set("Origin", O).send({})).status).toBe(200);
    expect((await agent.get("/api/me")).status).toBe(401);
    expect(
      (await request(t.app).post("/api/auth/request-password-reset").set("Origin", O).send({ email: "process@demo.test", redirectTo: "/reset-password" }))
        .status,
    ).toBe(200);
    const link = await request(t.app).get("/api/auth/reset-password/NoSuchToken123?callbackURL=%2Freset-password");
    expect(link.status).toBe(302);
    expect(link.headers.location).toBe(`${O}/reset-password?error=INVALID_TOKEN`);
  });
});

describe("the size of what better-auth reads", () => {
  it(`when a sign-in body declares more than ${AUTH_BODY_LIMIT / 1024} KB, then 413 in the envelope before it is read, and the connection is closed`, async () => {
    const res = await request(t.app)
      .post("/api/auth/sign-in/email")
      .set("Origin", O)
      .set("Content-Type", "application/json")
      .send(JSON.stringify({ email: "quality@demo.test", password: "p".repeat(AUTH_BODY_LIMIT) }));
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe("too_large");
    expect(res.body.error.message).toBe("A sign-in request is never larger than 64 KB; this one was refused without being read.");
    expect(res.headers.connection).toBe("close");
  });

  it("when a body without a declared length streams past the cap, then 413 as soon as the count passes it", async () => {
    const server = t.app.listen(0, "127.0.0.1");
    await new Promise<void>((resolve) => server.once("listening", () => resolve()));
    try {
      const { port } = server.address() as AddressInfo;
      const chunk = Buffer.alloc(8 * 1024, "a");
      let written = 0;
      const answer = await new Promise<{ status: number; body: string }>((resolve, reject) => {
        const req = http.request(
          {
            host: "127.0.0.1",
            port,
            method: "POST",
            path: "/api/auth/reset-password",
            headers: { "content-type": "application/json", origin: O, "transfer-encoding": "chunked" },
          },
          (res) => {
            let body = "";
            res.on("data", (d) => (body += d));
            res.on("end", () => resolve({ status: res.statusCode ?? 0, body }));
          },
        );
        // The server may close the connection while we still write: that is the point.
        req.on("error", (err) => (written > AUTH_BODY_LIMIT ? undefined : reject(err)));
        req.write('{"token":"');
        // 1 MB offered in 8 KB pieces, slowly enough that the answer comes back mid-stream.
        const pump = () => {
          if (written >= 1024 * 1024 || req.destroyed) return req.end();
          written += chunk.length;
          if (req.write(chunk)) setImmediate(pump);
          else req.once("drain", pump);
        };
        pump();
      });
      expect(answer.status).toBe(413);
      expect(JSON.parse(answer.body).error.code).toBe("too_large");
    } finally {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
    }
  });
});

describe("hostile sign-in bodies and return addresses", () => {
  it("when a sign-in body nests thousands of arrays, then 400 in words (the library's own refusal overflowed the stack: 500)", async () => {
    const deep = "[".repeat(5_000) + "]".repeat(5_000);
    const res = await request(t.app)
      .post("/api/auth/sign-in/email")
      .set("Origin", O)
      .set("Content-Type", "application/json")
      .send(`{"email":${deep},"password":"x"}`);
    expect(res.status).toBe(400);
    expect(res.body.error).toEqual({
      code: "validation_failed",
      message: "The sign-in service could not read this request: it is nested far deeper than any sign-in form.",
    });
  });

  it("when a sign-in field has the wrong type, then 400 in words, with the library's detail", async () => {
    const res = await request(t.app)
      .post("/api/auth/sign-in/email")
      .set("Origin", O)
      .send({ email: { $ne: "" }, password: ["x"] });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("validation_failed");
    expect(res.body.error.message).toBe(
      "The sign-in service could not read this request: give the e-mail address, the password and the link's code as plain text.",
    );
    expect(res.body.error.details[0].message).toMatch(/body\.email/);
  });

  it("when a reset link, a reset request or a sign-in names another site to return to, then 403, whatever mode the library's own origin check is in", async () => {
    for (const target of ["https://evil.example/", "//evil.example/x", "/\\evil.example", "javascript:alert(1)"]) {
      const link = await request(t.app).get(`/api/auth/reset-password/NoSuchToken123?callbackURL=${encodeURIComponent(target)}`);
      expect(link.status, target).toBe(403);
      expect(link.body.error.code).toBe("invalid_callback_url");
      expect(link.headers.location).toBeUndefined();
      const ask = await request(t.app).post("/api/auth/request-password-reset").set("Origin", O).send({ email: "inspector@demo.test", redirectTo: target });
      expect(ask.status, target).toBe(403);
      const signIn = await request(t.app)
        .post("/api/auth/sign-in/email")
        .set("Origin", O)
        .send({ email: "inspector@demo.test", password: TEST_PASSWORD, callbackURL: target });
      expect(signIn.status, target).toBe(403);
    }
    expect(one("select count(*) from email_outbox where to_addresses = 'inspector@demo.test'")).toBe(0);
  });
});

describe("reset links", () => {
  const tokensOf = (userId: string) =>
    (
      t.db.$client
        .prepare("select identifier from verification where value = ? and identifier like 'reset-password:%' order by rowid")
        .pluck()
        .all(userId) as string[]
    ).map((i) => i.slice("reset-password:".length));
  const ask = (email: string) => request(t.app).post("/api/auth/request-password-reset").set("Origin", O).send({ email, redirectTo: "/reset-password" });
  const reset = (token: string, newPassword: string) => request(t.app).post("/api/auth/reset-password").set("Origin", O).send({ token, newPassword });

  it("when a user resets with the newer of two links, then the older link no longer sets a password, and no link of theirs is left", async () => {
    const id = idOf("quality");
    expect((await ask("quality@demo.test")).status).toBe(200);
    expect((await ask("quality@demo.test")).status).toBe(200);
    const [older, newer] = tokensOf(id);
    expect(older).toBeDefined();
    expect(newer).toBeDefined();
    expect((await reset(newer!, "quality-newer-link-1")).status).toBe(200);
    const stale = await reset(older!, "quality-older-link-2");
    expect(stale.status).toBe(400);
    expect(stale.body.error.code).toBe("invalid_token");
    expect(tokensOf(id)).toEqual([]);
    expect(
      (await request(t.app).post("/api/auth/sign-in/email").set("Origin", O).send({ email: "quality@demo.test", password: "quality-newer-link-1" })).status,
    ).toBe(200);
    const audit = t.db.$client.prepare("select user_id, user_name, after from audit_log where action = 'user.password.changed' and entity_id = ?").all(id) as {
      user_id: string;
      user_name: string;
      after: string;
    }[];
    expect(audit).toHaveLength(1);
    expect(audit[0]!.user_id).toBe(id);
    expect(JSON.parse(audit[0]!.after)).toEqual({ how: "reset", resetLinksRevoked: 1, locksLifted: 0 });
  });

  it("when a password is changed or set by an administrator (server-side calls), then every reset link still out for that user stops working", async () => {
    const id = idOf("claims");
    await ask("claims@demo.test");
    const [pending] = tokensOf(id);
    expect(pending).toBeDefined();
    const own = await request(t.app).post("/api/auth/sign-in/email").set("Origin", O).send({ email: "claims@demo.test", password: TEST_PASSWORD });
    const cookie = (own.headers["set-cookie"] as unknown as string[]).map((c) => c.split(";")[0]).join("; ");
    await t.auth.api.changePassword({ body: { currentPassword: TEST_PASSWORD, newPassword: "claims-changed-pw-1" }, headers: new Headers({ cookie }) });
    expect(tokensOf(id)).toEqual([]);
    expect((await reset(pending!, "claims-via-old-link")).status).toBe(400);

    await ask("claims@demo.test");
    const [second] = tokensOf(id);
    const adminIn = await request(t.app).post("/api/auth/sign-in/email").set("Origin", O).send({ email: "admin@demo.test", password: TEST_PASSWORD });
    const adminCookie = (adminIn.headers["set-cookie"] as unknown as string[]).map((c) => c.split(";")[0]).join("; ");
    await t.auth.api.setUserPassword({ body: { userId: id, newPassword: "claims-set-by-admin" }, headers: new Headers({ cookie: adminCookie }) });
    expect(tokensOf(id)).toEqual([]);
    expect((await reset(second!, "claims-via-old-link")).status).toBe(400);
    const rows = t.db.$client.prepare("select user_id, after from audit_log where action = 'user.password.changed' and entity_id = ? order by id").all(id) as {
      user_id: string;
      after: string;
    }[];
    expect(rows.map((r) => [r.user_id, JSON.parse(r.after).how])).toEqual([
      [id, "changed"],
      [idOf("admin"), "set by an administrator"],
    ]);
  });

  it("when the administrator reads the mail outbox, then reset and invitation links are hidden there, while the mail as sent carries the working link", async () => {
    const admin = await t.agentFor("admin");
    const created = await admin
      .post("/api/admin/users")
      .set("Origin", O)
      .send({ name: "Tomas Lind (demo)", email: "tomas@demo.test", roles: ["inspector"], firstSignIn: "invitation" });
    expect(created.status).toBe(201);
    expect((await ask("process@demo.test")).status).toBe(200);
    const liveTokens = [...tokensOf(created.body.id), ...tokensOf(idOf("process"))];
    expect(liveTokens.length).toBeGreaterThanOrEqual(2);

    const outbox = await admin.get("/api/admin/outbox?pageSize=200");
    expect(outbox.status).toBe(200);
    const linkMails = (outbox.body.items as { kind: string; text: string; to: string[] }[]).filter(
      (m) => m.kind === "invitation" || m.kind === "password_reset",
    );
    expect(linkMails.map((m) => m.to[0])).toEqual(expect.arrayContaining(["tomas@demo.test", "process@demo.test"]));
    for (const m of linkMails) {
      expect(m.text).toMatch(/\/api\/auth\/reset-password\/\[link hidden\]/);
      expect(m.text).not.toMatch(/reset-password\/[A-Za-z0-9]{10,}/);
    }
    const whole = JSON.stringify(outbox.body);
    for (const token of liveTokens) expect(whole).not.toContain(token);

    // Sent over SMTP with the real link, which works.
    await t.mailer.processDue();
    const received = one("select text_body from mail_received where envelope_to = 'tomas@demo.test' order by id desc limit 1") as string;
    const link = /(https?:\/\/\S+\/api\/auth\/reset-password\/[A-Za-z0-9]+\S*)/.exec(received)![1]!;
    const url = new URL(link);
    const follow = await request(t.app).get(url.pathname + url.search);
    expect(follow.status).toBe(302);
    const token = new URL(follow.headers.location!, O).searchParams.get("token")!;
    expect(liveTokens).toContain(token);
    expect((await reset(token, "tomas-chose-this-1")).status).toBe(200);
  });
});

describe("per-address sign-in budget on the path better-auth resolves", () => {
  it("when sign-in and reset requests are spelled with dot segments or encodings, then they spend the same per-address budget and never get past it", async () => {
    const limited = await createTestApp({ scale: 0.01, env: { RATE_LIMIT_SIGNIN: "3" } });
    try {
      const post = (path: string, body: object) => request(limited.app).post(path).set("Origin", limited.env.BETTER_AUTH_URL).send(body);
      const wrong = { email: "quality@demo.test", password: "wrong-password-1" };
      const statuses = [
        (await post("/api/auth/sign-in/email", wrong)).status,
        (await post("/api/auth/./sign-in/email", wrong)).status,
        (await post("/api/auth/x/../sign-in/email", wrong)).status,
        (await post("/api/auth/%2e/sign-in/email", wrong)).status,
        (await post("/api/auth/sign-in/email", { email: "quality@demo.test", password: TEST_PASSWORD })).status,
        (await post("/api/auth/x/%2E%2E/request-password-reset", { email: "quality@demo.test", redirectTo: "/reset-password" })).status,
        (await post("/api/auth/SIGN-IN/email", wrong)).status,
      ];
      // The spelled variants are refused (404) and still count: past three, everything is 429.
      expect(statuses).toEqual([401, 404, 404, 429, 429, 429, 429]);
      expect(limited.db.$client.prepare("select count(*) from email_outbox where kind = 'password_reset'").pluck().get()).toBe(0);
    } finally {
      await limited.close();
    }
  });
});
