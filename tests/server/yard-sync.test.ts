import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type request from "supertest";
import { createTestApp, type TestApp } from "../helpers/test-app";

/**
 * The yard tablets' set (issue 13): what GET /api/yard/sync hands a tablet, checked against the
 * database row by row; the window setting; the cap; the ETag; who may ask; and the refusal an
 * entry logged offline under an unknown slab id meets when it reaches the server.
 */
let t: TestApp;
let inspector: request.Agent;
let seededAt: number;

const HOUR = 3_600_000;
const DAY = 24 * HOUR;
const O = () => t.env.BETTER_AUTH_URL;
const all = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).all(...a) as Record<string, any>[];
const one = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).get(...a) as Record<string, any>;

/** Slab ids the set must hold (computed with the later clock) and may hold (the earlier one), from the database alone. */
function expectedIds(windowHours: number, before: number, after: number) {
  const ids = (now: number) =>
    new Set(
      t.db.$client
        .prepare(
          `select slab_id from slabs s where s.cast_at >= @from
           union select slab_id from slabs s where s.cast_at >= @horizon
             and not exists (select 1 from defects d where d.slab_id = s.id and d.deleted_at is null)
             and not exists (select 1 from products p where p.slab_id = s.id)`,
        )
        .pluck()
        .all({ from: now - windowHours * HOUR, horizon: now - 90 * DAY }) as string[],
    );
  return { must: ids(after), may: ids(before) };
}

async function sync(agent: request.Agent = inspector) {
  const before = Date.now();
  const res = await agent.get("/api/yard/sync");
  return { res, before, after: Date.now() };
}

beforeAll(async () => {
  seededAt = Date.now();
  t = await createTestApp({ scale: 0.02 });
  inspector = await t.agentFor("inspector");
});
afterAll(() => t?.close());

/** The slab's risk under the seeded, switched-on slag-spot model (the seed trains one when its history allows), read from the rows. */
function expectedRisk(slabId: string) {
  const r = one(
    `select r.risk, r.reasons, m.version, m.band_high, m.band_raised from slab_risks r join risk_models m on m.id = r.model_id and m.active = 1
     join slabs s on s.id = r.slab_id where s.slab_id = ?`,
    slabId,
  );
  if (!r) return null;
  return {
    risk: r.risk,
    band: r.risk >= r.band_high ? "high" : r.risk >= r.band_raised ? "raised" : "usual",
    target: "Mold-flux / slag entrapment (slag spot)",
    modelVersion: r.version,
    reasons: JSON.parse(r.reasons).map((x: { text: string }) => x.text),
    usualPlace: expect.toSatisfy(
      (p: string | null) => p === null || /^usually on the .+ face, (head|middle|tail) third \(\d+ % of \d+ past entries\)$/.test(p),
    ),
  };
}

describe("the demo plant's last shifts", () => {
  it("when the demo is seeded, then its last shift ends at the seed and slabs cast in the last hours wait uninspected in the yard", () => {
    const lastCast = one("select max(cast_at) as t from slabs").t as number;
    expect(lastCast).toBeLessThanOrEqual(Date.now());
    expect(seededAt - lastCast).toBeLessThan(30 * 60_000);
    const waiting = one(
      `select count(*) as n from slabs s where s.cast_at >= ?
         and not exists (select 1 from defects d where d.slab_id = s.id) and not exists (select 1 from products p where p.slab_id = s.id)`,
      seededAt - 8 * HOUR,
    ).n as number;
    expect(waiting).toBeGreaterThan(50);
    // The previous shift's inspector logged some (not reviewed yet); the first heats went hot to the mill.
    const logged = one("select count(*) as n, min(review_status) as lo, max(review_status) as hi from defects where client_key like 'demo-yard-%'");
    expect(logged.n).toBeGreaterThan(5);
    expect([logged.lo, logged.hi]).toEqual(["new", "new"]);
    expect(one("select count(*) as n from products where rolled_at >= ?", seededAt - DAY).n).toBeGreaterThan(5);
    // Every slab of the last shifts has its conditions from its own level-2 samples, like the history.
    expect(
      one(
        "select count(*) as n from slabs s join slab_conditions c on c.slab_id = s.id where s.cast_at >= ? and c.casting_speed_source <> 'samples'",
        seededAt - DAY,
      ).n,
    ).toBe(0);
  });
});

describe("the yard set", () => {
  it("when the inspector asks for the set, then it holds every slab cast in the last 48 h and every uninspected one, each as the database has it", async () => {
    const { res, before, after } = await sync();
    expect(res.status).toBe(200);
    expect(res.body.windowHours).toBe(48);
    expect(res.body.uninspectedMaxDays).toBe(90);
    const ids = new Set<string>(res.body.slabs.map((s: { slabId: string }) => s.slabId));
    const { must, may } = expectedIds(48, before, after);
    for (const id of must) expect(ids.has(id), `${id} is missing`).toBe(true);
    for (const id of ids) expect(may.has(id), `${id} should not be there`).toBe(true);
    expect(res.body.matched).toBe(ids.size);
    expect(res.body.leftOut).toBe(0);
    expect(ids.size).toBeGreaterThan(200);
    // Newest first.
    const cast = res.body.slabs.map((s: { castAt: string }) => Date.parse(s.castAt));
    expect(cast).toEqual([...cast].sort((a, b) => b - a));

    // One uninspected slab, field by field against its row.
    const row = one(
      `select s.slab_id, h.heat_no, g.code as grade, st.strand_no, s.piece_no, s.length_mm, s.width_mm, s.thickness_mm, s.weight_t, s.cast_at, s.transition
       from slabs s join heats h on h.id = s.heat_id join grades g on g.id = h.grade_id join strands st on st.id = s.strand_id
       where s.piece_no = 2 and not exists (select 1 from defects d where d.slab_id = s.id) and not exists (select 1 from products p where p.slab_id = s.id)
       order by s.cast_at desc limit 1`,
    );
    const next = one(
      "select n.slab_id from slabs n join slabs s on s.heat_id = n.heat_id and s.strand_id = n.strand_id where s.slab_id = ? and n.piece_no = 3",
      row.slab_id,
    );
    const got = res.body.slabs.find((s: { slabId: string }) => s.slabId === row.slab_id);
    expect(got).toEqual({
      slabId: row.slab_id,
      heatNo: row.heat_no,
      gradeCode: row.grade,
      strandNo: row.strand_no,
      pieceNo: 2,
      lengthMm: row.length_mm,
      widthMm: row.width_mm,
      thicknessMm: 230,
      weightT: row.weight_t,
      castAt: new Date(row.cast_at).toISOString(),
      transition: row.transition === 1,
      disposition: null,
      defects: 0,
      uninspected: true,
      products: [],
      nextPieceId: next?.slab_id ?? null,
      risk: expectedRisk(row.slab_id),
    });
    expect(got.slabId).toBe(`${row.heat_no}-${row.strand_no}02`);

    // A rolled slab names its coil and when it was rolled; it is not "uninspected".
    const rolled = one(
      "select s.slab_id, p.product_id, p.kind, p.rolled_at from products p join slabs s on s.id = p.slab_id where s.cast_at >= ? order by p.id limit 1",
      after - 24 * HOUR,
    );
    const gotRolled = res.body.slabs.find((s: { slabId: string }) => s.slabId === rolled.slab_id);
    expect(gotRolled.products).toEqual([{ productId: rolled.product_id, kind: "coil", rolledAt: new Date(rolled.rolled_at).toISOString() }]);
    expect(gotRolled.uninspected).toBe(false);

    // An inspected slab: its entries counted, its disposition the worst of them.
    const inspected = one(
      "select s.slab_id, s.disposition, count(*) as n from defects d join slabs s on s.id = d.slab_id where d.client_key like 'demo-yard-%' group by s.id order by s.id limit 1",
    );
    expect(res.body.slabs.find((s: { slabId: string }) => s.slabId === inspected.slab_id)).toMatchObject({
      defects: inspected.n,
      disposition: inspected.disposition,
      uninspected: false,
    });

    // The last piece of a heat on its strand has no next piece.
    const last = one(
      `select s.slab_id from slabs s where s.cast_at >= ? and s.piece_no = (select max(piece_no) from slabs x where x.heat_id = s.heat_id and x.strand_id = s.strand_id) limit 1`,
      after - 24 * HOUR,
    );
    expect(res.body.slabs.find((s: { slabId: string }) => s.slabId === last.slab_id).nextPieceId).toBeNull();
  });

  it("when the inspector asks for the set, then it carries the active catalogue and the inspector's own entries of the last 7 days, not others'", async () => {
    const { res, after } = await sync();
    const types = all(
      "select t.code from defect_types t join defect_categories c on c.id = t.category_id where t.active = 1 and c.active = 1 order by c.sort_order, t.code",
    );
    expect(res.body.catalogue.types.map((x: { code: string }) => x.code)).toEqual(types.map((x) => x.code));
    expect(res.body.mineDays).toBe(7);
    const mine = all(
      `select d.id from defects d join user u on u.id = d.created_by
       where u.email = 'inspector@demo.test' and d.deleted_at is null and d.found_at >= ? order by d.found_at desc, d.id desc`,
      after - 7 * DAY,
    ).map((r) => r.id);
    expect(mine.length).toBeGreaterThan(5);
    expect(res.body.mine.map((d: { id: number }) => d.id)).toEqual(mine);
    const quality = await t.agentFor("quality");
    const theirs = await quality.get("/api/yard/sync");
    expect(theirs.status).toBe(200);
    const qualityId = one("select id from user where email = 'quality@demo.test'").id as string;
    expect(theirs.body.mine.filter((d: { createdById: string }) => d.createdById !== qualityId)).toEqual([]);
  });

  it("when a tablet already holds the current set, then it gets 304 and nothing else; after a new entry, the new set", async () => {
    const first = await inspector.get("/api/yard/sync");
    const etag = first.headers.etag as string;
    expect(etag).toMatch(/^W\/"[A-Za-z0-9_-]{32}"$/);
    expect(first.headers["cache-control"]).toBe("private, no-cache");
    // Sent gzipped to a client that takes it (supertest does, and unpacks it).
    expect(first.headers["content-encoding"]).toBe("gzip");
    expect(first.body.slabs.length).toBeGreaterThan(200);
    const again = await inspector.get("/api/yard/sync").set("If-None-Match", etag);
    expect(again.status).toBe(304);
    expect(again.text).toBe("");
    expect(again.headers.etag).toBe(etag);
    // A weak form of the tag and a list of tags are read too; another tag gets the set.
    const bare = etag.replace(/^W\//, "");
    expect((await inspector.get("/api/yard/sync").set("If-None-Match", `"other", ${bare}`)).status).toBe(304);
    const plain = await inspector.get("/api/yard/sync").set("Accept-Encoding", "identity");
    expect(plain.headers["content-encoding"]).toBeUndefined();
    expect(plain.headers.etag).toBe(etag);
    expect((await inspector.get("/api/yard/sync").set("If-None-Match", '"not-this-one"')).status).toBe(200);

    const slab = first.body.slabs.find((s: { uninspected: boolean; pieceNo: number }) => s.uninspected && s.pieceNo === 1);
    const created = await inspector.post("/api/defects").set("Origin", O()).send({
      slab_id: slab.slabId,
      type_code: "SCB",
      face: "inner",
      position_along_mm: 1000,
      position_across_mm: 300,
      severity: 1,
      disposition: "accept",
      client_key: "yard-sync-etag-0001",
    });
    expect(created.status).toBe(201);
    const after = await inspector.get("/api/yard/sync").set("If-None-Match", etag);
    expect(after.status).toBe(200);
    expect(after.headers.etag).not.toBe(etag);
    expect(after.body.slabs.find((s: { slabId: string }) => s.slabId === slab.slabId)).toMatchObject({ defects: 1, disposition: "accept", uninspected: false });
    expect(after.body.mine[0]).toMatchObject({ id: created.body.id, slabId: slab.slabId, typeCode: "SCB" });
  });

  it("when the inspector asks for one slab the tablet does not hold, then it comes as the set carries it; an unknown id is 404", async () => {
    const old = one("select s.slab_id, p.product_id from slabs s join products p on p.slab_id = s.id order by s.id limit 1");
    const res = await inspector.get(`/api/yard/slabs/${old.slab_id.toLowerCase()}`);
    expect(res.status).toBe(200);
    expect(res.body.slabId).toBe(old.slab_id);
    expect(res.body.products.map((p: { productId: string }) => p.productId)).toContain(old.product_id);
    const unknown = await inspector.get("/api/yard/slabs/L269999-199");
    expect(unknown.status).toBe(404);
    expect(unknown.body.error).toMatchObject({ code: "not_found" });
    expect(unknown.body.error.message).toContain("L269999-199");
  });
});

describe("the window setting", () => {
  it("when the process engineer sets the window to 6 h, then it is stored with an audit row and the set follows; bad values are refused in words", async () => {
    const process = await t.agentFor("process");
    const put = await process.put("/api/yard/settings").set("Origin", O()).send({ syncWindowHours: 6 });
    expect(put.status).toBe(200);
    expect(put.body).toEqual({ syncWindowHours: 6 });
    expect(JSON.parse(one("select value from plant_settings where key = 'yard.tablets'").value)).toEqual({ syncWindowHours: 6 });
    const audit = one("select before, after, user_name from audit_log where action = 'settings.update' and entity_id = 'yard' order by id desc limit 1");
    expect(JSON.parse(audit.before)).toEqual({ syncWindowHours: 48 });
    expect(JSON.parse(audit.after)).toEqual({ syncWindowHours: 6 });
    expect(audit.user_name).toMatch(/./);
    expect((await inspector.get("/api/yard/settings")).body).toEqual({ syncWindowHours: 6 });

    const { res, before, after } = await sync();
    expect(res.body.windowHours).toBe(6);
    const { must, may } = expectedIds(6, before, after);
    const ids = new Set<string>(res.body.slabs.map((s: { slabId: string }) => s.slabId));
    for (const id of must) expect(ids.has(id)).toBe(true);
    for (const id of ids) expect(may.has(id)).toBe(true);
    // An inspected slab cast 6–48 h ago was in the 48 h set and is not in this one.
    const inspectedOlder = one(
      "select s.slab_id from slabs s join defects d on d.slab_id = s.id where d.client_key like 'demo-yard-%' and s.cast_at < ? order by s.cast_at desc limit 1",
      after - 7 * HOUR,
    );
    expect(ids.has(inspectedOlder.slab_id)).toBe(false);

    for (const bad of [0, 1.5, 337, "48", null]) {
      const r = await process.put("/api/yard/settings").set("Origin", O()).send({ syncWindowHours: bad });
      expect(r.status, String(bad)).toBe(400);
      expect(r.body.error.code).toBe("validation_failed");
      expect(JSON.stringify(r.body.error.details)).toContain("syncWindowHours");
    }
    expect(JSON.parse(one("select value from plant_settings where key = 'yard.tablets'").value)).toEqual({ syncWindowHours: 6 });
    const refused = await inspector.put("/api/yard/settings").set("Origin", O()).send({ syncWindowHours: 12 });
    expect(refused.status).toBe(403);
    expect(refused.body.error.code).toBe("forbidden");
    expect((await process.put("/api/yard/settings").set("Origin", O()).send({ syncWindowHours: 48 })).status).toBe(200);
  });
});

describe("who may ask", () => {
  it("when a process engineer or a claims officer asks for the set, then 403 in the envelope; signed out, 401", async () => {
    for (const role of ["process", "claims"] as const) {
      const agent = await t.agentFor(role);
      const res = await agent.get("/api/yard/sync");
      expect(res.status).toBe(403);
      expect(res.body.error).toMatchObject({ code: "forbidden" });
      expect((await agent.get("/api/yard/slabs/L260001-101")).status).toBe(403);
    }
    const admin = await t.agentFor("admin");
    expect((await admin.get("/api/yard/sync")).status).toBe(200);
    const anonymous = await (await import("supertest")).default(t.app).get("/api/yard/sync");
    expect(anonymous.status).toBe(401);
    expect(anonymous.body.error).toBeDefined();
  });
});

describe("an entry logged offline under a slab id the server does not know", () => {
  it("when the outbox posts it, then 404 names the id in plain words and nothing is stored", async () => {
    const before = one("select count(*) as n from defects").n;
    const audits = one("select count(*) as n from audit_log").n;
    const res = await inspector
      .post("/api/defects")
      .set("Origin", O())
      .send({
        slab_id: "l269999-199",
        type_code: "SLG",
        face: "outer",
        position_along_mm: 2000,
        position_across_mm: 500,
        severity: 2,
        disposition: "scarf",
        client_key: "offline-unknown-slab-0001",
        found_at: new Date(Date.now() - 60_000).toISOString(),
      });
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe("not_found");
    expect(res.body.error.message).toBe("There is no slab L269999-199 on record. Check the id on the slab's label, or scan it again.");
    expect(one("select count(*) as n from defects").n).toBe(before);
    expect(one("select count(*) as n from defects where client_key = 'offline-unknown-slab-0001'").n).toBe(0);
    expect(one("select count(*) as n from audit_log").n).toBe(audits);
  });
});

describe("the cap", () => {
  it("when more than 5,000 slabs match, then the newest 5,000 go and the answer says how many more there are", async () => {
    // A busy plant: 5,150 more slabs cast in the last hours, on one invented heat.
    const c = t.db.$client;
    const heat = one("select * from heats order by id desc limit 1");
    const strand = one("select id from strands order by id limit 1").id as number;
    const now = Date.now();
    const heatId = Number(
      c
        .prepare("insert into heats (heat_no, caster_id, grade_id, cast_start, casting_speed_m_min) values ('CAPTEST1', ?, ?, ?, 1.4)")
        .run(heat.caster_id, heat.grade_id, now - 5 * HOUR).lastInsertRowid,
    );
    const ins = c.prepare(
      "insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm, weight_t, cast_at) values (?, ?, ?, ?, 10000, 1500, 230, 26.9, ?)",
    );
    c.transaction(() => {
      for (let i = 1; i <= 5150; i++) ins.run(`CAPTEST1-${i}`, heatId, strand, i, now - 4 * HOUR + i * 1000);
    })();
    const { res, before, after } = await sync();
    const { must } = expectedIds(48, before, after);
    expect(res.status).toBe(200);
    expect(res.body.slabs).toHaveLength(5000);
    expect(res.body.matched).toBe(must.size);
    expect(res.body.leftOut).toBe(must.size - 5000);
    expect(res.body.leftOut).toBeGreaterThan(150);
    // The newest 5,000 of them, newest first.
    const newest = [...must]
      .map((id) => one("select slab_id, cast_at, id from slabs where slab_id = ?", id))
      .sort((a, b) => b.cast_at - a.cast_at || b.id - a.id)
      .slice(0, 5000)
      .map((r) => r.slab_id);
    expect(res.body.slabs.map((s: { slabId: string }) => s.slabId)).toEqual(newest);
    const piece = res.body.slabs.find((s: { slabId: string }) => s.slabId === "CAPTEST1-5149");
    expect(piece).toMatchObject({ heatNo: "CAPTEST1", pieceNo: 5149, nextPieceId: "CAPTEST1-5150", uninspected: true });
  });
});
