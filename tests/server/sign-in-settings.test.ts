import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import { groupsOfIdToken, rolesFromGroups, applyDirectoryRoles } from "../../server/services/sign-in-settings.service";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

const jwt = (claims: unknown) => `e30.${Buffer.from(JSON.stringify(claims)).toString("base64url")}.sig`;

describe("the groups of an ID token and the roles they give (pure)", () => {
  const settings = {
    groupRoles: [
      { group: "quality-lab", roles: ["quality" as const] },
      { group: "process-engineering", roles: ["process" as const, "quality" as const] },
      { group: "it-admins", roles: ["admin" as const] },
    ],
    localPasswords: "everyone" as const,
  };

  it("when a person is in several mapped groups, then they get the union of the roles, in the product's order, each once", () => {
    expect(rolesFromGroups(settings, ["process-engineering", "quality-lab", "visitors"])).toEqual(["quality", "process"]);
    expect(rolesFromGroups(settings, ["it-admins"])).toEqual(["admin"]);
  });

  it("when no group of theirs is mapped (or they have none), then they get no role", () => {
    expect(rolesFromGroups(settings, ["visitors"])).toEqual([]);
    expect(rolesFromGroups(settings, [])).toEqual([]);
  });

  it("when the group claim is a list, one string, missing or of another kind, then the groups are read as such and nothing else", () => {
    expect(groupsOfIdToken(jwt({ groups: ["a", "b"] }), "groups")).toEqual(["a", "b"]);
    expect(groupsOfIdToken(jwt({ roles: "quality-lab" }), "roles")).toEqual(["quality-lab"]);
    expect(groupsOfIdToken(jwt({ groups: ["a", 7, null, "", { x: 1 }] }), "groups")).toEqual(["a"]);
    expect(groupsOfIdToken(jwt({ groups: { a: 1 } }), "groups")).toEqual([]);
    expect(groupsOfIdToken(jwt({}), "groups")).toEqual([]);
    expect(groupsOfIdToken("not-a-token", "groups")).toEqual([]);
    expect(groupsOfIdToken(`e30.${Buffer.from("{broken").toString("base64url")}.x`, "groups")).toEqual([]);
    expect(groupsOfIdToken(null, "groups")).toEqual([]);
  });
});

describe("the administrator's sign-in settings over HTTP", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp({ scale: 0 });
  });
  afterAll(async () => t?.close());
  const origin = () => t.env.BETTER_AUTH_URL;

  it("when no identity provider is set up, then the sign-in page is offered passwords only and starting a single sign-on is refused in words", async () => {
    const about = await request(t.app).get("/api/about");
    expect(about.body.signIn).toEqual({ sso: null, localPasswords: "everyone" });
    const start = await request(t.app).post("/api/auth/sign-in/social").set("Origin", origin()).send({ provider: "plant", callbackURL: "/" });
    expect(start.status).toBe(404);
    expect(start.body.error.message).toContain("not set up here");
  });

  it("when the administrator saves a mapping, then it is read back as saved (roles in the product's order) and the change is audited before and after", async () => {
    const admin = await t.agentFor("admin");
    const res = await admin
      .put("/api/admin/sign-in")
      .set("Origin", origin())
      .send({ groupRoles: [{ group: "  quality-lab ", roles: ["process", "quality"] }], localPasswords: "everyone" });
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ groupRoles: [{ group: "quality-lab", roles: ["quality", "process"] }], localPasswords: "everyone", provider: null });
    expect((await admin.get("/api/admin/sign-in")).body.groupRoles).toEqual([{ group: "quality-lab", roles: ["quality", "process"] }]);
    const audit = t.db.$client
      .prepare("select user_id, before, after from audit_log where action = 'settings.sign_in.changed' order by id desc limit 1")
      .get() as {
      user_id: string;
      before: string;
      after: string;
    };
    expect(JSON.parse(audit.before)).toEqual({ groupRoles: [], localPasswords: "everyone" });
    expect(JSON.parse(audit.after)).toEqual({ groupRoles: [{ group: "quality-lab", roles: ["quality", "process"] }], localPasswords: "everyone" });
    expect(audit.user_id).toBe(t.db.$client.prepare("select id from user where email = 'admin@demo.test'").pluck().get());
  });

  it("when a group is listed twice, or passwords are closed with no identity provider, then the change is refused in words and nothing is saved", async () => {
    const admin = await t.agentFor("admin");
    const before = (await admin.get("/api/admin/sign-in")).body;
    const twice = await admin
      .put("/api/admin/sign-in")
      .set("Origin", origin())
      .send({
        groupRoles: [
          { group: "a", roles: ["quality"] },
          { group: "a", roles: ["process"] },
        ],
        localPasswords: "everyone",
      });
    expect(twice.status).toBe(400);
    expect(twice.body.error.message).toBe("The group “a” is listed twice: give each group one line with all its roles.");
    const closed = await admin.put("/api/admin/sign-in").set("Origin", origin()).send({ groupRoles: [], localPasswords: "administrators" });
    expect(closed.status).toBe(409);
    expect(closed.body.error.code).toBe("no_identity_provider");
    expect(closed.body.error.message).toContain("once the plant's identity provider is set up");
    expect((await admin.get("/api/admin/sign-in")).body).toEqual(before);
  });

  it("when someone other than an administrator asks, then the settings are not shown and cannot be changed", async () => {
    const quality = await t.agentFor("quality");
    expect((await quality.get("/api/admin/sign-in")).status).toBe(403);
    expect((await quality.put("/api/admin/sign-in").set("Origin", origin()).send({ groupRoles: [], localPasswords: "everyone" })).status).toBe(403);
  });

  it("when the directory no longer gives the last active administrator the admin role, then they keep it and the audit row says why", async () => {
    const onlyAdmin = t.db.$client.prepare("select id from user where email = 'admin@demo.test'").pluck().get() as string;
    const r = applyDirectoryRoles(t.db, onlyAdmin, ["quality-lab"]);
    expect(r.after).toEqual(["quality", "process", "admin"]);
    const row = t.db.$client
      .prepare("select after from audit_log where action = 'user.roles.from_directory' and entity_id = ?")
      .pluck()
      .get(onlyAdmin) as string;
    expect(JSON.parse(row)).toEqual({
      roles: ["quality", "process", "admin"],
      groups: ["quality-lab"],
      keptAdmin: "the last active administrator keeps the admin role",
    });
    // Signing in still works with the password (a local account keeps it).
    const res = await request(t.app).post("/api/auth/sign-in/email").set("Origin", origin()).send({ email: "admin@demo.test", password: TEST_PASSWORD });
    expect(res.status).toBe(200);
  });
});
