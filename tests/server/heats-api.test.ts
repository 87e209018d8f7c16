import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type request from "supertest";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
let quality: request.Agent;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.02 });
  quality = await t.agentFor("quality");
});
afterAll(() => t?.close());

const all = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).all(...a) as Record<string, any>[];
const one = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).get(...a) as Record<string, any>;

describe("heats list", () => {
  it("when paged, then the pages together hold every heat once, newest first", async () => {
    const total = one("select count(*) as n from heats").n as number;
    const seen: string[] = [];
    for (let page = 1; page <= Math.ceil(total / 10); page++) {
      const res = await quality.get(`/api/heats?pageSize=10&page=${page}`);
      expect(res.status).toBe(200);
      expect(res.body.total).toBe(total);
      seen.push(...res.body.items.map((h: { heatNo: string }) => h.heatNo));
    }
    expect(new Set(seen).size).toBe(total);
    const expected = all("select heat_no from heats order by cast_start desc, id desc").map((r) => r.heat_no);
    expect(seen).toEqual(expected);
  });

  it("when sorted by defects, then the counts fall and match the database", async () => {
    const res = await quality.get("/api/heats?sort=defects&dir=desc&pageSize=5");
    const counts = res.body.items.map((h: { defects: number }) => h.defects);
    expect([...counts].sort((a, b) => b - a)).toEqual(counts);
    const top = res.body.items[0];
    const db = one(
      `select count(*) as n from defects d join slabs s on s.id = d.slab_id join heats h on h.id = s.heat_id
       where h.heat_no = ? and d.deleted_at is null and d.review_status <> 'rejected'`,
      top.heatNo,
    ).n;
    expect(top.defects).toBe(db);
  });

  it("when searched by the start of a heat number, a grade, or a date range, then only those heats come back", async () => {
    const h = one("select heat_no, cast_start from heats order by id limit 1 offset 3");
    const byNo = await quality.get(`/api/heats?q=${h.heat_no}`);
    expect(byNo.body.items.map((x: { heatNo: string }) => x.heatNo)).toEqual([h.heat_no]);
    const byGrade = await quality.get("/api/heats?grade=LV-ST32&pageSize=200");
    expect(byGrade.body.items.every((x: { gradeCode: string }) => x.gradeCode === "LV-ST32")).toBe(true);
    expect(byGrade.body.total).toBe(one("select count(*) as n from heats h join grades g on g.id = h.grade_id where g.code = 'LV-ST32'").n);
    const day = new Date(h.cast_start).toISOString().slice(0, 10);
    const byDay = await quality.get(`/api/heats?from=${day}&to=${day}&pageSize=200`);
    const start = Date.parse(day + "T00:00:00Z");
    expect(byDay.body.total).toBe(one("select count(*) as n from heats where cast_start between ? and ?", start, start + 86_400_000 - 1).n);
    expect((await quality.get("/api/heats?from=yesterday")).status).toBe(400);
  });
});

describe("one heat and one slab", () => {
  it("when a heat is opened, then its chemistry, conditions, derived values and slabs are there", async () => {
    const h = one("select * from heats order by id limit 1 offset 5");
    const res = await quality.get(`/api/heats/${h.heat_no}`);
    expect(res.status).toBe(200);
    expect(res.body.chemistry.cPct).toBe(h.c_pct);
    expect(res.body.conditions.liquidusSource).toBe("computed");
    expect(res.body.slabs.length).toBe(one("select count(*) as n from slabs where heat_id = ?", h.id).n);
    expect(res.body.slabs[0].conditions.castingSpeedSource).toBe("samples");
    expect(res.body.derived).toHaveLength(2);
    expect(res.body.derived[0].throughputTPerMin).toBeGreaterThan(1);
    const samples = await quality.get(`/api/heats/${h.heat_no}/samples?maxPoints=20`);
    expect(samples.body.strands).toHaveLength(2);
    expect(samples.body.strands[0].points.length).toBeLessThanOrEqual(20);
    expect(samples.body.strands[0].total).toBeGreaterThan(20);
  });

  it("when a slab is opened by its id in any case, then it comes with its resolved conditions and defects", async () => {
    const s = one("select s.slab_id, s.id from slabs s where exists (select 1 from defects d where d.slab_id = s.id) limit 1");
    const res = await quality.get(`/api/slabs/${s.slab_id.toLowerCase()}`);
    expect(res.status).toBe(200);
    expect(res.body.slabId).toBe(s.slab_id);
    expect(res.body.defects.length).toBe(one("select count(*) as n from defects where slab_id = ? and deleted_at is null", s.id).n);
    const c = one("select * from slab_conditions where slab_id = ?", s.id);
    expect(res.body.conditions.castingSpeedMPerMin).toBe(c.casting_speed_m_min);
    expect(res.body.conditions.sampleCount).toBe(c.sample_count);
  });

  it("when the slab or heat does not exist, then 404 with a message an inspector understands", async () => {
    const res = await quality.get("/api/slabs/NOPE-1");
    expect(res.status).toBe(404);
    expect(res.body.error.message).toBe("There is no slab NOPE-1 on record. Check the id on the slab's label.");
    expect((await quality.get("/api/heats/NOPE")).status).toBe(404);
  });
});
