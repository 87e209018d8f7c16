import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createTestApp, type TestApp } from "../helpers/test-app";

describe("each person's language", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp({ scale: 0 });
  });
  afterAll(async () => t?.close());

  it("when a person picks German, then it is stored, their session says so at once, and choosing none again removes it", async () => {
    const quality = await t.agentFor("quality");
    expect((await quality.get("/api/me")).body.language).toBeUndefined();
    const set = await quality.put("/api/me/language").set("Origin", t.env.BETTER_AUTH_URL).send({ language: "de" });
    expect(set.status).toBe(200);
    expect(set.body.language).toBe("de");
    expect((await quality.get("/api/me")).body.language).toBe("de");
    expect(t.db.$client.prepare("select language from user where email = 'quality@demo.test'").pluck().get()).toBe("de");
    const audit = t.db.$client.prepare("select before, after from audit_log where action = 'user.language.changed' order by id desc limit 1").get() as {
      before: string;
      after: string;
    };
    expect([JSON.parse(audit.before), JSON.parse(audit.after)]).toEqual([{ language: null }, { language: "de" }]);
    const cleared = await quality.put("/api/me/language").set("Origin", t.env.BETTER_AUTH_URL).send({ language: null });
    expect(cleared.body.language).toBeUndefined();
    expect((await quality.get("/api/me")).body.language).toBeUndefined();
  });

  it("when a language we do not have is asked for, then it is refused in words and nothing changes", async () => {
    const inspector = await t.agentFor("inspector");
    const res = await inspector.put("/api/me/language").set("Origin", t.env.BETTER_AUTH_URL).send({ language: "fr" });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("validation_failed");
    expect(t.db.$client.prepare("select language from user where email = 'inspector@demo.test'").pluck().get()).toBeNull();
  });
});
