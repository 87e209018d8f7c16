import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import { createUser } from "../../server/services/users.service";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

let t: TestApp;
let inspector: request.Agent;
let otherInspector: request.Agent;
let quality: request.Agent;
let claims: request.Agent;
let slab: { slab_id: string; id: number; length_mm: number; width_mm: number; thickness_mm: number };

beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
  inspector = await t.agentFor("inspector");
  quality = await t.agentFor("quality");
  claims = await t.agentFor("claims");
  await createUser(t.db, t.auth, { name: "Second inspector", email: "inspector2@demo.test", roles: ["inspector"], password: TEST_PASSWORD }, { actor: "test" });
  otherInspector = request.agent(t.app);
  await otherInspector.post("/api/auth/sign-in/email").set("Origin", t.env.BETTER_AUTH_URL).send({ email: "inspector2@demo.test", password: TEST_PASSWORD });
  slab = t.db.$client
    .prepare("select id, slab_id, length_mm, width_mm, thickness_mm from slabs s where not exists (select 1 from defects d where d.slab_id = s.id) limit 1")
    .get() as typeof slab;
});
afterAll(() => t?.close());

const O = () => t.env.BETTER_AUTH_URL;
let keyNo = 0;
const key = () => `test-key-${++keyNo}-${Date.now()}`;
const entry = (over: Record<string, unknown> = {}) => ({
  slab_id: slab.slab_id.toLowerCase(),
  type_code: "LFC",
  face: "inner",
  position_along_mm: 2500,
  position_across_mm: 700,
  length_mm: 400,
  width_mm: 5,
  depth_mm: 1.5,
  severity: 2,
  stage: "slab_yard",
  disposition: "scarf",
  note: "Along the casting direction",
  client_key: key(),
  ...over,
});
const one = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).get(...a) as Record<string, any>;

describe("logging a defect", () => {
  it("when an inspector logs a defect, then 201 with the id, the row as sent, the slab's disposition and an audit row", async () => {
    const body = entry();
    const res = await inspector.post("/api/defects").set("Origin", O()).send(body);
    expect(res.status).toBe(201);
    expect(res.body.created).toBe(true);
    const row = one("select * from defects where id = ?", res.body.id);
    expect(row).toMatchObject({
      slab_id: slab.id,
      face: "inner",
      position_along_mm: 2500,
      position_across_mm: 700,
      severity: 2,
      disposition: "scarf",
      review_status: "new",
      client_key: body.client_key,
    });
    expect(res.body.defect).toMatchObject({ slabId: slab.slab_id, typeCode: "LFC", canEdit: true });
    expect(one("select disposition from slabs where id = ?", slab.id).disposition).toBe("scarf");
    expect(one("select count(*) as n from audit_log where action = 'defect.create' and entity_id = ?", String(res.body.id)).n).toBe(1);
  });

  it("when the same entry is sent again with its client key, then it is stored once and the same id comes back", async () => {
    const body = entry();
    const first = await inspector.post("/api/defects").set("Origin", O()).send(body);
    const again = await inspector.post("/api/defects").set("Origin", O()).send(body);
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ id: first.body.id, created: false });
    expect(one("select count(*) as n from defects where client_key = ?", body.client_key).n).toBe(1);
  });

  it("when the slab does not exist, then 404 with words an inspector understands, and nothing is stored", async () => {
    const before = one("select count(*) as n from defects").n;
    const res = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send(entry({ slab_id: "ZZ-404" }));
    expect(res.status).toBe(404);
    expect(res.body.error.message).toBe("There is no slab ZZ-404 on record. Check the id on the slab's label, or scan it again.");
    expect(one("select count(*) as n from defects").n).toBe(before);
  });

  it("when the position lies outside the slab, then 400 naming the slab's size", async () => {
    const along = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send(entry({ position_along_mm: slab.length_mm + 1 }));
    expect(along.status).toBe(400);
    expect(along.body.error.code).toBe("outside_slab");
    expect(along.body.error.message).toContain(`beyond the slab's length of ${slab.length_mm} mm`);
    // On a narrow face "across" runs over the thickness.
    const narrow = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send(entry({ face: "left", position_across_mm: slab.thickness_mm + 5 }));
    expect(narrow.status).toBe(400);
    expect(narrow.body.error.message).toContain(`${slab.thickness_mm} mm thick`);
    const ok = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send(entry({ face: "left", position_across_mm: slab.thickness_mm }));
    expect(ok.status).toBe(201);
  });

  it("when the input is malformed, then 400 per field and nothing is stored", async () => {
    const before = one("select count(*) as n from defects").n;
    const res = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send(entry({ severity: 7, face: "top", position_along_mm: -3, client_key: "x" }));
    expect(res.status).toBe(400);
    expect(res.body.error.details.map((d: { path: string }) => d.path).sort()).toEqual(["client_key", "face", "position_along_mm", "severity"]);
    expect(one("select count(*) as n from defects").n).toBe(before);
  });

  it("when a type is retired, then it cannot be logged any more", async () => {
    expect((await quality.patch("/api/defect-types/STC").set("Origin", O()).send({ active: false })).status).toBe(200);
    const res = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send(entry({ type_code: "STC" }));
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("retired_type");
    const cat = (await inspector.get("/api/defect-types")).body;
    expect(cat.types.map((x: { code: string }) => x.code)).not.toContain("STC");
    await quality.patch("/api/defect-types/STC").set("Origin", O()).send({ active: true });
  });

  it("when a claims officer tries to log a defect, then 403", async () => {
    const res = await claims.post("/api/defects").set("Origin", O()).send(entry());
    expect(res.status).toBe(403);
  });
});

describe("changing entries", () => {
  it("when the inspector edits their own new entry, then it changes and is audited; another inspector gets 403", async () => {
    const created = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send(entry({ severity: 1 }));
    const id = created.body.id;
    const edit = await inspector.patch(`/api/defects/${id}`).set("Origin", O()).send({ severity: 3, disposition: "hold" });
    expect(edit.status).toBe(200);
    expect(edit.body).toMatchObject({ severity: 3, disposition: "hold" });
    const audit = one("select before, after from audit_log where action = 'defect.update' and entity_id = ? order by id desc", String(id));
    expect([JSON.parse(audit.before).severity, JSON.parse(audit.after).severity]).toEqual([1, 3]);
    const other = await otherInspector.patch(`/api/defects/${id}`).set("Origin", O()).send({ severity: 1 });
    expect(other.status).toBe(403);
    expect(other.body.error.message).toContain("made by someone else");
    expect((await otherInspector.delete(`/api/defects/${id}`).set("Origin", O())).status).toBe(403);
  });

  it("when a quality engineer has reviewed it, then only a quality engineer can change it, and the change is audited", async () => {
    const created = await inspector.post("/api/defects").set("Origin", O()).send(entry());
    const id = created.body.id;
    const review = await quality.post(`/api/defects/${id}/review`).set("Origin", O()).send({ decision: "confirm" });
    expect(review.status).toBe(200);
    expect(review.body).toMatchObject({ reviewStatus: "confirmed", canEdit: true });
    const mine = await inspector.get(`/api/defects/${id}`);
    expect(mine.body.canEdit).toBe(false);
    const late = await inspector.patch(`/api/defects/${id}`).set("Origin", O()).send({ severity: 4 });
    expect(late.status).toBe(403);
    expect(late.body.error.message).toContain("has reviewed this entry");
    const q = await quality.patch(`/api/defects/${id}`).set("Origin", O()).send({ severity: 4 });
    expect(q.status).toBe(200);
    expect(one("select user_id from audit_log where action = 'defect.update' and entity_id = ? order by id desc", String(id)).user_id).toBe(
      one("select id from user where email = 'quality@demo.test'").id,
    );
  });

  it("when the inspector deletes their own new entry, then it is kept but marked deleted and disappears from lists", async () => {
    const created = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send(entry({ disposition: "scrap", severity: 4 }));
    const id = created.body.id;
    expect(one("select disposition from slabs where id = ?", slab.id).disposition).toBe("scrap");
    const del = await inspector.delete(`/api/defects/${id}`).set("Origin", O());
    expect(del.status).toBe(200);
    expect(one("select deleted_at from defects where id = ?", id).deleted_at).not.toBeNull();
    expect((await inspector.get(`/api/defects/${id}`)).status).toBe(404);
    // The slab's disposition falls back to the worst of what remains.
    expect(one("select disposition from slabs where id = ?", slab.id).disposition).not.toBe("scrap");
  });
});

describe("review", () => {
  it("when corrected, then the type and severity change, the status says corrected, and it is audited with before and after", async () => {
    const created = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send(entry({ type_code: "DEP", severity: 1 }));
    const res = await quality
      .post(`/api/defects/${created.body.id}/review`)
      .set("Origin", O())
      .send({ decision: "correct", type_code: "LFC", severity: 2, note: "A crack, not a depression" });
    expect(res.body).toMatchObject({ reviewStatus: "corrected", typeCode: "LFC", severity: 2 });
    const audit = one("select before, after from audit_log where action = 'defect.review.correct' and entity_id = ?", String(created.body.id));
    expect(JSON.parse(audit.after)).toMatchObject({ review_status: "corrected", severity: 2, note: "A crack, not a depression" });
    expect(JSON.parse(audit.before)).toMatchObject({ review_status: "new", severity: 1 });
  });

  it("when rejected without a reason, then 400; with one, the entry no longer counts for the slab", async () => {
    const created = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send(entry({ disposition: "downgrade" }));
    expect((await quality.post(`/api/defects/${created.body.id}/review`).set("Origin", O()).send({ decision: "reject" })).status).toBe(400);
    const res = await quality.post(`/api/defects/${created.body.id}/review`).set("Origin", O()).send({ decision: "reject", note: "Scale mark, not a defect" });
    expect(res.body.reviewStatus).toBe("rejected");
  });

  it("when an inspector tries to review, then 403", async () => {
    const created = await inspector.post("/api/defects").set("Origin", O()).send(entry());
    expect((await inspector.post(`/api/defects/${created.body.id}/review`).set("Origin", O()).send({ decision: "confirm" })).status).toBe(403);
  });

  it("when the queue is read, then it lists the new entries oldest first", async () => {
    const res = await quality.get("/api/defects?reviewStatus=new&sort=oldest&pageSize=200");
    expect(res.status).toBe(200);
    expect(res.body.items.every((d: { reviewStatus: string }) => d.reviewStatus === "new")).toBe(true);
    const times = res.body.items.map((d: { foundAt: string }) => Date.parse(d.foundAt));
    expect([...times].sort((a, b) => a - b)).toEqual(times);
    expect(res.body.total).toBe(one("select count(*) as n from defects where review_status = 'new' and deleted_at is null").n);
  });

  it("when the queue is read most severe first, then severity falls and, within one severity, the oldest comes first", async () => {
    const res = await quality.get("/api/defects?reviewStatus=new&sort=severity&pageSize=200");
    expect(res.status).toBe(200);
    const rows = res.body.items.map((d: { severity: number; foundAt: string; id: number }) => [d.severity, Date.parse(d.foundAt), d.id] as const);
    expect(rows.length).toBeGreaterThan(2);
    expect(new Set(rows.map((r: readonly number[]) => r[0])).size).toBeGreaterThan(1);
    const expected = [...rows].sort((a, b) => b[0] - a[0] || a[1] - b[1] || a[2] - b[2]);
    expect(rows).toEqual(expected);
    expect((await quality.get("/api/defects?sort=loudest")).status).toBe(400);
  });
});

describe("lists and the catalogue", () => {
  it("when the inspector asks for today's own entries, then only theirs from today come back", async () => {
    const today = new Date().toISOString().slice(0, 10);
    const res = await inspector.get(`/api/defects?mine=true&from=${today}&to=${today}&pageSize=200`);
    const meId = one("select id from user where email = 'inspector@demo.test'").id;
    expect(res.body.total).toBe(
      one("select count(*) as n from defects where created_by = ? and deleted_at is null and found_at >= ?", meId, Date.parse(today + "T00:00:00Z")).n,
    );
    expect(res.body.items.every((d: { createdById: string }) => d.createdById === meId)).toBe(true);
  });

  it("when the catalogue is read, then the types the caller used recently carry that time", async () => {
    const cat = (await inspector.get("/api/defect-types")).body;
    const lfc = cat.types.find((x: { code: string }) => x.code === "LFC");
    expect(lfc.lastUsedByMeAt).not.toBeNull();
    const never = cat.types.find((x: { code: string }) => x.code === "SEM");
    expect(never.lastUsedByMeAt).toBeNull();
    expect(cat.categories.length).toBe(5);
  });

  it("when quality adds a category and a type, then it is in the catalogue; an inspector cannot", async () => {
    expect((await quality.post("/api/defect-categories").set("Origin", O()).send({ code: "edge", name: "Edge defects", sortOrder: 9 })).status).toBe(201);
    expect((await quality.post("/api/defect-types").set("Origin", O()).send({ code: "EDC", name: "Edge crack", categoryCode: "EDGE" })).status).toBe(201);
    expect((await quality.post("/api/defect-types").set("Origin", O()).send({ code: "EDC", name: "Again", categoryCode: "EDGE" })).status).toBe(409);
    expect((await inspector.post("/api/defect-types").set("Origin", O()).send({ code: "X1", name: "X", categoryCode: "EDGE" })).status).toBe(403);
    const cat = (await inspector.get("/api/defect-types")).body;
    expect(cat.types).toContainEqual(expect.objectContaining({ code: "EDC", categoryCode: "EDGE", active: true }));
  });
});

describe("causes shown with defects", () => {
  it("when a defect has a cause tagged, then an inspector (who cannot read causes) gets none with the defect, the defect list or the slab, and a quality engineer gets it in all three", async () => {
    const process_ = await t.agentFor("process");
    const created = await inspector.post("/api/defects").set("Origin", O()).send(entry());
    const id = created.body.id as number;
    const tagged = await process_
      .post(`/api/defects/${id}/causes`)
      .set("Origin", O())
      .send({ tags: ["sen-clogging"], confidence: "probable" });
    expect(tagged.status).toBe(201);
    // The causes routes themselves are closed to inspectors.
    expect((await inspector.get(`/api/defects/${id}/causes`)).status).toBe(403);
    const shown = async (agent: request.Agent) => {
      const one_ = await agent.get(`/api/defects/${id}`);
      const list = await agent.get(`/api/defects?slab=${slab.slab_id}&pageSize=200`);
      const slabPage = await agent.get(`/api/slabs/${slab.slab_id}`);
      expect([one_.status, list.status, slabPage.status]).toEqual([200, 200, 200]);
      return [
        one_.body.causes,
        list.body.items.find((d: { id: number }) => d.id === id).causes,
        slabPage.body.defects.find((d: { id: number }) => d.id === id).causes,
      ];
    };
    expect(await shown(inspector)).toEqual([[], [], []]);
    const brief = [{ tag: "sen-clogging", tagName: "SEN clogging", confidence: "probable" }];
    expect(await shown(quality)).toEqual([brief, brief, brief]);
  });
});
