import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import { defectCreatedSchema, defectSchema } from "../../shared/api/defects";
import { prepared } from "../../server/db/prepared";
import { recordAudit } from "../../server/services/audit.service";
import { createTestApp, type TestApp } from "../helpers/test-app";

/**
 * The defect post answers from the data it has in hand (issue 14), not by reading the entry back
 * through the list's join. Here the answer is compared with that read-back (GET /api/defects/:id
 * runs it), byte for byte, for the shapes an entry takes; and the audit row and the slab's
 * disposition, now written through prepared statements, are held to what they were.
 */
let t: TestApp;
let inspector: request.Agent;
let quality: request.Agent;
const O = () => t.env.BETTER_AUTH_URL;
type Slab = { id: number; slab_id: string; length_mm: number; width_mm: number; thickness_mm: number };
const freeSlabs: Slab[] = [];

beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
  inspector = await t.agentFor("inspector");
  quality = await t.agentFor("quality");
  freeSlabs.push(
    ...(t.db.$client
      .prepare(
        "select id, slab_id, length_mm, width_mm, thickness_mm from slabs s where not exists (select 1 from defects d where d.slab_id = s.id) order by id limit 6",
      )
      .all() as Slab[]),
  );
});
afterAll(() => t?.close());

let keyNo = 0;
const key = () => `write-path-${++keyNo}-${Date.now()}`;
const one = (sql: string, ...args: unknown[]) => t.db.$client.prepare(sql).get(...args) as Record<string, any>;

describe("the answer to a defect post", () => {
  const slab = () => freeSlabs[0]!;
  const shapes = () => [
    {
      name: "the fewest fields",
      body: { slab_id: slab().slab_id, type_code: "SLG", face: "inner", position_along_mm: 100, position_across_mm: 50, severity: 1, disposition: "accept" },
    },
    {
      name: "every field, the slab id in lower case with spaces, the type code in lower case, found_at with an offset",
      body: {
        slab_id: `  ${slab().slab_id.toLowerCase()} `,
        type_code: "lfc",
        face: "outer",
        position_along_mm: 2500.5,
        position_across_mm: 700.25,
        length_mm: 400,
        width_mm: 5.5,
        depth_mm: 1.5,
        severity: 3,
        stage: "after_scarfing",
        disposition: "grind",
        note: "  crack near the corner  ",
        found_at: "2026-01-05T07:30:00.123+02:00",
      },
    },
    {
      name: "an empty note, nulls for the sizes, a narrow face",
      body: {
        slab_id: slab().slab_id,
        type_code: "CLS",
        face: "left",
        position_along_mm: 0,
        position_across_mm: 0,
        length_mm: null,
        width_mm: null,
        depth_mm: null,
        severity: 2,
        disposition: "hold",
        note: "",
      },
    },
    {
      name: "a critical entry (it also goes to the quality engineers)",
      body: { slab_id: slab().slab_id, type_code: "SLV", face: "inner", position_along_mm: 10, position_across_mm: 10, severity: 4, disposition: "scrap" },
    },
  ];

  for (const role of ["inspector", "quality"] as const) {
    it(`when ${role === "inspector" ? "an inspector" : "a quality engineer"} posts entries of every shape, then each answer is byte for byte the entry as read back, and fits the documented schema exactly`, async () => {
      const agent = role === "inspector" ? inspector : quality;
      for (const { name, body } of shapes()) {
        const posted = await agent
          .post("/api/defects")
          .set("Origin", O())
          .send({ ...body, client_key: key() });
        expect(posted.status, name).toBe(201);
        const read = await agent.get(`/api/defects/${posted.body.id}`);
        expect(read.status).toBe(200);
        expect(JSON.stringify(posted.body.defect), name).toBe(JSON.stringify(read.body));
        expect(defectCreatedSchema.strict().parse(posted.body)).toBeTruthy();
        expect(Object.keys(posted.body.defect)).toEqual(Object.keys(defectSchema.shape));
        expect(posted.body).toMatchObject({ id: read.body.id, created: true });
      }
    });
  }

  it("when an entry is sent again after it was reviewed, then 200 with the entry as it is now, not as it was posted", async () => {
    const body = { ...shapes()[0]!.body, client_key: key() };
    const first = await inspector.post("/api/defects").set("Origin", O()).send(body);
    expect(first.status).toBe(201);
    expect(first.body.defect).toMatchObject({ reviewStatus: "new", canEdit: true });
    expect((await quality.post(`/api/defects/${first.body.id}/review`).set("Origin", O()).send({ decision: "confirm" })).status).toBe(200);
    const again = await inspector.post("/api/defects").set("Origin", O()).send(body);
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ id: first.body.id, created: false });
    expect(again.body.defect).toMatchObject({ reviewStatus: "confirmed", reviewedByName: expect.any(String), canEdit: false });
    expect(JSON.stringify(again.body.defect)).toBe(JSON.stringify((await inspector.get(`/api/defects/${first.body.id}`)).body));
  });
});

describe("the audit row of a post", () => {
  it("when the audit row cannot be written, then the entry is not stored either and the slab keeps its disposition (one transaction)", async () => {
    const slab = freeSlabs[1]!;
    const k = key();
    // A real SQLite trigger refuses this one audit row.
    t.db.$client.exec(
      `create trigger refuse_audit before insert on audit_log when json_extract(new.after, '$.client_key') = '${k}' begin select raise(abort, 'audit refused'); end`,
    );
    try {
      const res = await inspector.post("/api/defects").set("Origin", O()).send({
        slab_id: slab.slab_id,
        type_code: "SLG",
        face: "inner",
        position_along_mm: 1,
        position_across_mm: 1,
        severity: 2,
        disposition: "scrap",
        client_key: k,
      });
      expect(res.status).toBe(500);
      expect(res.body.error.code).toBe("internal");
    } finally {
      t.db.$client.exec("drop trigger refuse_audit");
    }
    expect(one("select count(*) as n from defects where client_key = ?", k).n).toBe(0);
    expect(one("select disposition from slabs where id = ?", slab.id).disposition).toBeNull();
  });

  it("when a post is stored, then its audit row is the one the ORM wrote before: who (with their name), what, which entry, the input as sent", async () => {
    const slab = freeSlabs[2]!;
    const body = {
      slab_id: slab.slab_id.toLowerCase(),
      type_code: "LFC",
      face: "inner",
      position_along_mm: 5,
      position_across_mm: 6,
      severity: 2,
      disposition: "grind",
      client_key: key(),
    };
    const res = await inspector.post("/api/defects").set("Origin", O()).send(body);
    expect(res.status).toBe(201);
    const row = one("select * from audit_log where action = 'defect.create' and entity_id = ?", String(res.body.id));
    const inspectorRow = one("select id, name from user where email = 'inspector@demo.test'");
    expect(row).toMatchObject({ user_id: inspectorRow.id, user_name: inspectorRow.name, actor: null, entity: "defect", before: null });
    expect(JSON.parse(row.after)).toEqual({ ...body, stage: "slab_yard", slab_id: slab.slab_id });
    expect(Math.abs(row.at - Date.now())).toBeLessThan(60_000);
  });

  it("when the same entry is recorded through the ORM (a transaction object) and through the prepared statements (the database), then the two rows are the same", () => {
    const userId = one("select id from user where email = 'quality@demo.test'").id as string;
    const entries = [
      { userId, action: "test.same", entity: "thing", entityId: 42, before: { a: 1, b: [1, "x", null] }, after: { note: "ünïcode ✓", n: 1.5 } },
      { actor: "seed", action: "test.same", entity: "thing", entityId: "abc" },
      { userId: null, action: "test.same", entity: "thing", entityId: null, before: null, after: "text" },
    ];
    for (const e of entries) {
      t.db.transaction((tx) => recordAudit(tx, e));
      recordAudit(t.db, e);
      const [orm, fast] = t.db.$client.prepare("select * from audit_log where action = 'test.same' order by id desc limit 2").all().reverse() as Record<
        string,
        unknown
      >[];
      const { id: _a, at: atOrm, ...restOrm } = orm!;
      const { id: _b, at: atFast, ...restFast } = fast!;
      expect(restFast).toEqual(restOrm);
      expect(typeof atFast).toBe("number");
      expect(Math.abs((atFast as number) - (atOrm as number))).toBeLessThan(60_000);
    }
  });
});

describe("the slab's disposition after a post", () => {
  const insertDirect = (slabId: number, disposition: string, review: string) =>
    t.db.$client
      .prepare(
        "insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, severity, stage, disposition, review_status, found_at) values (?, (select id from defect_types where code = 'SLG'), 'inner', 1, 1, 2, 'slab_yard', ?, ?, 0)",
      )
      .run(slabId, disposition, review);
  const post = (slab: Slab, disposition: string) =>
    inspector.post("/api/defects").set("Origin", O()).send({
      slab_id: slab.slab_id,
      type_code: "SLG",
      face: "inner",
      position_along_mm: 2,
      position_across_mm: 2,
      severity: 1,
      disposition,
      client_key: key(),
    });

  it("when the slab's stored disposition counts a rejected entry (older data), then a new entry sets it to the worst of the live, unrejected ones", async () => {
    const slab = freeSlabs[3]!;
    insertDirect(slab.id, "scrap", "rejected");
    insertDirect(slab.id, "scarf", "confirmed");
    t.db.$client.prepare("update slabs set disposition = 'scrap' where id = ?").run(slab.id);
    expect((await post(slab, "accept")).status).toBe(201);
    expect(one("select disposition from slabs where id = ?", slab.id).disposition).toBe("scarf");
  });

  it("when a slab has hundreds of entries, then a new one still leaves the worst of them, and a worse one raises it", async () => {
    const slab = freeSlabs[4]!;
    const kinds = ["accept", "scarf", "grind", "downgrade"];
    for (let i = 0; i < 400; i++) insertDirect(slab.id, kinds[i % kinds.length]!, i % 7 === 0 ? "rejected" : "confirmed");
    insertDirect(slab.id, "scrap", "rejected");
    expect((await post(slab, "accept")).status).toBe(201);
    expect(one("select disposition from slabs where id = ?", slab.id).disposition).toBe("downgrade");
    expect((await post(slab, "hold")).status).toBe(201);
    expect(one("select disposition from slabs where id = ?", slab.id).disposition).toBe("hold");
  });
});

describe("prepared statements", () => {
  it("when the same SQL is asked for again on a connection, then the statement prepared the first time comes back", () => {
    const a = prepared(t.db.$client, "select count(*) from slabs where id > ?");
    const b = prepared(t.db.$client, "select count(*) from slabs where id > ?");
    expect(b).toBe(a);
    expect(prepared(t.db.$client, "select count(*) from slabs where id >= ?")).not.toBe(a);
  });

  it("when more distinct SQL texts than the bound come, then the later ones still run but are not kept", () => {
    const texts = Array.from({ length: 520 }, (_, i) => `select ${i} + ? as v`);
    for (const sql of texts) expect((prepared(t.db.$client, sql).get(1) as { v: number }).v).toBe(Number(sql.split(" ")[1]) + 1);
    const last = texts[texts.length - 1]!;
    expect(prepared(t.db.$client, last)).not.toBe(prepared(t.db.$client, last));
    expect(prepared(t.db.$client, texts[0]!)).toBe(prepared(t.db.$client, texts[0]!));
  });
});
