import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type request from "supertest";
import { liquidusC } from "../../server/metallurgy/liquidus";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
let proc: request.Agent;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
  proc = await t.agentFor("process");
});
afterAll(() => t?.close());

const one = (sql: string, ...a: unknown[]) => t.db.$client.prepare(sql).get(...a) as Record<string, any>;
const O = () => t.env.BETTER_AUTH_URL;

describe("plant setup", () => {
  it("when the liquidus coefficients change, then every computed liquidus, superheat and slab condition follows, and it is audited", async () => {
    const settings = (await proc.get("/api/plant/settings")).body;
    const extended = { ...settings, liquidus: { baseC: 1537, perPct: { c: 88, si: 8, mn: 5, p: 30, s: 25, cu: 5, ni: 4, cr: 1.5 }, source: "plant's own" } };
    const res = await proc.put("/api/plant/settings").set("Origin", O()).send(extended);
    expect(res.status).toBe(200);
    expect(res.body.slabsResolved).toBe(one("select count(*) as n from slabs").n);
    const h = one("select * from heats where liquidus_source = 'computed' limit 1");
    const expected = liquidusC({ c: h.c_pct, si: h.si_pct, mn: h.mn_pct, p: h.p_pct, s: h.s_pct, cu: h.cu_pct, ni: h.ni_pct, cr: h.cr_pct }, extended.liquidus);
    expect(h.liquidus_c).toBeCloseTo(expected, 2);
    expect(h.superheat_c).toBeCloseTo(h.tundish_temp_c - h.liquidus_c, 2);
    const s = one("select c.* from slab_conditions c join slabs s on s.id = c.slab_id where s.heat_id = ? limit 1", h.id);
    expect(s.superheat_source).toBe("samples");
    expect(one("select count(*) as n from audit_log where action = 'settings.update'").n).toBe(1);
  });

  it("when a strand's brake calibration changes, then its slabs' field and interaction number follow", async () => {
    const strand = one("select * from strands where strand_no = 1");
    const slab = one("select c.* from slab_conditions c join slabs s on s.id = c.slab_id where s.strand_id = ? and c.embr_current_a > 0 limit 1", strand.id);
    const res = await proc
      .patch(`/api/plant/strands/${strand.id}`)
      .set("Origin", O())
      .send({ embrCalibration: { kind: "linear", teslaPerAmp: 0.0015, offsetT: 0 } });
    expect(res.status).toBe(200);
    const after = one("select * from slab_conditions where slab_id = ?", slab.slab_id);
    // Twice the field → four times the interaction number (N ∝ B²).
    expect(after.embr_field_t).toBeCloseTo(2 * slab.embr_field_t, 9);
    expect(after.stuart_number).toBeCloseTo(4 * slab.stuart_number, 9);
    const audit = one("select before, after from audit_log where action = 'strand.update' order by id desc limit 1");
    expect(JSON.parse(audit.after).embr_calibration).toContain("0.0015");
  });

  it("when the input is out of range, then 400 and nothing changes", async () => {
    const strand = one("select * from strands where strand_no = 2");
    const bad = await proc.patch(`/api/plant/strands/${strand.id}`).set("Origin", O()).send({ moldEffectiveLengthMm: -800 });
    expect(bad.status).toBe(400);
    const swapped = await proc.patch(`/api/plant/strands/${strand.id}`).set("Origin", O()).send({ moldWidthMinMm: 2000, moldWidthMaxMm: 1000 });
    expect(swapped.status).toBe(400);
    expect(one("select * from strands where id = ?", strand.id)).toEqual(strand);
  });

  it("when grades and families are added, renamed and retired, then the list shows it and duplicates are refused", async () => {
    expect((await proc.post("/api/plant/grade-families").set("Origin", O()).send({ code: "tst", name: "Test family" })).status).toBe(201);
    expect((await proc.post("/api/plant/grade-families").set("Origin", O()).send({ code: "TST", name: "Again" })).status).toBe(409);
    expect((await proc.post("/api/plant/grades").set("Origin", O()).send({ code: "LV-T1", name: "Trial", familyCode: "TST" })).status).toBe(201);
    expect((await proc.post("/api/plant/grades").set("Origin", O()).send({ code: "LV-T2", name: "Trial", familyCode: "NOPE" })).status).toBe(400);
    expect((await proc.patch("/api/plant/grades/lv-t1").set("Origin", O()).send({ active: false })).status).toBe(200);
    const setup = (await proc.get("/api/plant/setup")).body;
    const fam = setup.gradeFamilies.find((f: { code: string }) => f.code === "TST");
    expect(fam.grades).toEqual([expect.objectContaining({ code: "LV-T1", active: false })]);
  });
});
