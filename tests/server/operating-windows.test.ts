import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type request from "supertest";
import type { Db } from "../../server/db/client";
import { windowFlagsForSlabs } from "../../server/services/operating-windows.service";
import { createResolver } from "../../server/services/conditions.service";
import { createTestApp, type TestApp } from "../helpers/test-app";

/**
 * Operating windows (issue 15) through the real app on a plant the test builds, with a known number
 * of flagged and affected slabs. The group sizes are those of Newcombe's worked examples, so the
 * Wilson intervals can be checked against the published values:
 *
 *  LC family (grade LV-DQ10), cast in the last 60 days:
 *   A  263 slabs at 1.70 m/min, brake 100 A            — 81 with a slag spot (SLG)
 *   B  100 slabs at 1.70 m/min, brake 300 A            — 10 SLG
 *      45 slabs at 1.40 m/min, brake 100 A             —  5 SLG
 *       3 slabs at 1.40 m/min, brake not recorded      —  0
 *   U   5 slabs at 1.70 m/min, brake not recorded      —  2 SLG (unknown for a speed-and-brake rule)
 *   OLD 10 slabs at 1.70 m/min, brake 100 A, cast 400 days ago — all 10 SLG
 *  Beside the counted SLG entries, three flagged A slabs carry entries that must not count for SLG:
 *  a rejected SLG entry, a deleted SLG entry, and a longitudinal facial crack (LFC).
 *  PER family (grade LV-ST32), cast in the last 60 days:
 *   P1 20 slabs at superheat 40 °C, 1.70 m/min, brake 100 A — 0 LFC
 *   P2 29 slabs at superheat 25 °C, 1.40 m/min, brake 300 A — 1 LFC
 */
let t: TestApp;
let processEng: request.Agent;
let quality: request.Agent;
let inspector: request.Agent;
let claims: request.Agent;
const DAY = 86_400_000;
const groups: Record<string, number[]> = {};
const heatOf: Record<string, string> = {};

function buildPlant(db: Db) {
  const c = db.$client;
  const one = (sql: string, ...a: unknown[]) =>
    c
      .prepare(sql)
      .pluck()
      .get(...a) as number;
  const caster = one("select id from casters where code = 'CC2'");
  const strand = one("select id from strands where caster_id = ? and strand_no = 1", caster);
  const grade = { LC: one("select id from grades where code = 'LV-DQ10'"), PER: one("select id from grades where code = 'LV-ST32'") };
  const type = (code: string) => one("select id from defect_types where code = ?", code);
  const inspectorId = c.prepare("select id from user where email = 'inspector@demo.test'").pluck().get() as string;
  const heatIns = c.prepare(
    `insert into heats (heat_no, caster_id, grade_id, cast_start, cast_end, casting_speed_m_min, tundish_temp_c, liquidus_c, superheat_c, embr_current_a, sen_depth_mm, argon_nl_min, mold_level_sd_mm)
     values (?, ?, ?, ?, ?, ?, ?, 1520, ?, ?, 160, 8, 2.5)`,
  );
  const slabIns = c.prepare(
    "insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm, weight_t, cast_at) values (?, ?, ?, ?, 10000, 1500, 230, 26.91, ?)",
  );
  const defIns = c.prepare(
    "insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, severity, stage, disposition, found_at, created_by, review_status, deleted_at) values (?, ?, 'inner', 2500, 300, 2, 'slab_yard', 'scarf', ?, ?, ?, ?)",
  );
  let heatNo = 0;
  const now = Date.now();
  const group = (
    name: string,
    family: "LC" | "PER",
    n: number,
    speed: number,
    embr: number | null,
    superheat: number,
    affected: number,
    defect: string,
    castAt: number,
  ) => {
    const ids: number[] = [];
    for (let i = 0; i < n; i += 8) {
      const no = `OW${String(++heatNo).padStart(4, "0")}`;
      heatOf[name] ??= no;
      const start = castAt + heatNo * 60_000;
      const heatId = Number(heatIns.run(no, caster, grade[family], start, start + 3_600_000, speed, 1520 + superheat, superheat, embr).lastInsertRowid);
      for (let s = 0; s < Math.min(8, n - i); s++) ids.push(Number(slabIns.run(`${no}-${s + 1}`, heatId, strand, s + 1, start + s * 60_000).lastInsertRowid));
    }
    for (let i = 0; i < affected; i++) defIns.run(ids[i], type(defect), now, inspectorId, "confirmed", null);
    groups[name] = ids;
  };
  c.transaction(() => {
    const recent = now - 60 * DAY;
    group("A", "LC", 263, 1.7, 100, 25, 81, "SLG", recent);
    group("B1", "LC", 100, 1.7, 300, 25, 10, "SLG", recent);
    group("B2", "LC", 45, 1.4, 100, 25, 5, "SLG", recent);
    group("B3", "LC", 3, 1.4, null, 25, 0, "SLG", recent);
    group("U", "LC", 5, 1.7, null, 25, 2, "SLG", recent);
    group("OLD", "LC", 10, 1.7, 100, 25, 10, "SLG", now - 400 * DAY);
    group("P1", "PER", 20, 1.7, 100, 40, 0, "LFC", recent);
    group("P2", "PER", 29, 1.4, 300, 25, 1, "LFC", recent);
    // Entries that do not count for SLG, on flagged slabs without a counted one.
    const [rejectedOn, deletedOn, lfcOn] = groups.A!.slice(81, 84);
    defIns.run(rejectedOn, type("SLG"), now, inspectorId, "rejected", null);
    defIns.run(deletedOn, type("SLG"), now, inspectorId, "confirmed", now);
    defIns.run(lfcOn, type("LFC"), now, inspectorId, "confirmed", null);
  })();
  createResolver(db).resolveAll();
}

beforeAll(async () => {
  t = await createTestApp({ production: false, beforeStart: buildPlant });
  processEng = await t.agentFor("process");
  quality = await t.agentFor("quality");
  inspector = await t.agentFor("inspector");
  claims = await t.agentFor("claims");
}, 120_000);
afterAll(() => t?.close());

const origin = () => t.env.BETTER_AUTH_URL;
const post = (agent: request.Agent, body: unknown) =>
  agent
    .post("/api/operating-windows")
    .set("Origin", origin())
    .send(body as object);
const audits = (action: string, id: number) =>
  t.db.$client.prepare("select * from audit_log where action = ? and entity = 'operating_window' and entity_id = ?").all(action, String(id)) as Record<
    string,
    any
  >[];

const FAST_WEAK = {
  name: "Fast casting with a weak brake",
  familyCode: "LC",
  target: { kind: "type", code: "SLG" },
  conditions: [
    { variable: "casting_speed_m_min", op: "above", value: 1.6 },
    { variable: "embr_current_a", op: "below", value: 150 },
  ],
  note: "Test rule.",
};
let fastWeakId = 0;

describe("operating windows: records on history", () => {
  it("when a process engineer writes a rule for the LC family, then it is stored, audited, and its record counts the flagged and affected slabs exactly, with Newcombe's Wilson intervals", async () => {
    const res = await post(processEng, FAST_WEAK);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const w = res.body;
    fastWeakId = w.id;
    expect(w).toMatchObject({ name: FAST_WEAK.name, familyCode: "LC", target: { kind: "type", code: "SLG" }, retiredAt: null, note: "Test rule." });
    expect(w.text).toBe("Casting speed above 1.60 m/min and EMBr current below 150 A");
    expect(w.conditions.map((c: { unit: string }) => c.unit)).toEqual(["m/min", "A"]);
    const r = w.record;
    // Flagged: group A (263, 81 SLG); the rejected and deleted SLG entries and the LFC entry do not count.
    expect(r.flagged).toMatchObject({ slabs: 263, affected: 81 });
    // The rest: B1 + B2 + B3 = 100 + 45 + 3 = 148 slabs, 10 + 5 = 15 SLG; a missing brake value on a slow slab is still "rest".
    expect(r.rest).toMatchObject({ slabs: 148, affected: 15 });
    // Fast slabs with no brake value recorded are neither (U: 5); the old slabs are outside the last 365 days; PER slabs are another family.
    expect(r.unknown).toBe(5);
    expect(r.flagged.share).toBeCloseTo(81 / 263, 12);
    expect(r.rest.share).toBeCloseTo(15 / 148, 12);
    // Newcombe 1998, Stat. Med. 17:857, Table I, method 3 (Wilson score, no continuity correction): 81/263 → 0.2553–0.3662, 15/148 → 0.0624–0.1605.
    expect(r.flagged.lower).toBeCloseTo(0.2553, 4);
    expect(r.flagged.upper).toBeCloseTo(0.3662, 4);
    expect(r.rest.lower).toBeCloseTo(0.0624, 4);
    expect(r.rest.upper).toBeCloseTo(0.1605, 4);
    // Newcombe 1998, method 10 (hybrid score), by hand from the published Wilson limits above:
    // d = 81/263 − 15/148 = 0.20663; L = d − √((0.30798 − 0.2553)² + (0.1605 − 0.10135)²) = 0.1274; U = d + √((0.3662 − 0.30798)² + (0.10135 − 0.0624)²) = 0.2767.
    const d = 81 / 263 - 15 / 148;
    expect(r.difference).toBeCloseTo(d, 12);
    expect(r.differenceLower).toBeCloseTo(d - Math.sqrt((81 / 263 - 0.2553) ** 2 + (0.1605 - 15 / 148) ** 2), 3);
    expect(r.differenceUpper).toBeCloseTo(d + Math.sqrt((0.3662 - 81 / 263) ** 2 + (15 / 148 - 0.0624) ** 2), 3);
    expect(r.differenceLower).toBeCloseTo(0.1274, 3);
    expect(r.differenceUpper).toBeCloseTo(0.2767, 3);
    expect(r.intervalsOverlap).toBe(false);
    expect(r.verdict).toBe("more");
    expect(r.verdictText).toMatch(/more often than the rest/);
    expect(r.method).toMatch(/Wilson score interval, 95 %, no continuity correction/);
    expect(r.method).toMatch(/Newcombe's hybrid score interval/);
    // Stored and audited in the same transaction, naming the process engineer.
    const row = t.db.$client.prepare("select * from operating_windows where id = ?").get(fastWeakId) as Record<string, any>;
    expect(JSON.parse(row.conditions)).toEqual(FAST_WEAK.conditions);
    expect(row.created_by_name).toBeTruthy();
    const a = audits("operating_window.create", fastWeakId);
    expect(a).toHaveLength(1);
    expect(a[0]!.user_id).toBe(row.created_by);
    expect(JSON.parse(a[0]!.after).name).toBe(FAST_WEAK.name);
  });

  it("when the record window reaches back 400 days, then the old slabs count too", async () => {
    const from = new Date(Date.now() - 401 * DAY).toISOString().slice(0, 10);
    const res = await quality.get(`/api/operating-windows?from=${from}`);
    expect(res.status).toBe(200);
    const w = res.body.items.find((x: { id: number }) => x.id === fastWeakId);
    expect(w.record.flagged).toMatchObject({ slabs: 273, affected: 91 });
    expect(w.record.rest).toMatchObject({ slabs: 148, affected: 15 });
    expect(res.body.from).toBe(from);
    // A window before any slab was cast: nothing flagged, no verdict, in words.
    const empty = await quality.get("/api/operating-windows?from=2001-01-01&to=2001-12-31");
    const e = empty.body.items.find((x: { id: number }) => x.id === fastWeakId).record;
    expect(e.flagged).toEqual({ slabs: 0, affected: 0, share: null, lower: null, upper: null });
    expect(e.verdict).toBeNull();
    expect(e.verdictText).toMatch(/^No slab cast in the window met every condition/);
  });

  it("when a rule watches the PER family, then only PER slabs count, and 0/20 against 1/29 is no clear difference (Newcombe's values)", async () => {
    const res = await post(processEng, {
      name: "Hot tundish on PER",
      familyCode: "PER",
      target: { kind: "type", code: "LFC" },
      conditions: [{ variable: "superheat_c", op: "above", value: 35 }],
    });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const r = res.body.record;
    expect(r.flagged).toMatchObject({ slabs: 20, affected: 0, share: 0 });
    expect(r.rest).toMatchObject({ slabs: 29, affected: 1 });
    // Newcombe 1998, Table I, method 3: 0/20 → 0–0.1611; 1/29 → 0.0061–0.1718.
    expect(r.flagged.lower).toBe(0);
    expect(r.flagged.upper).toBeCloseTo(0.1611, 4);
    expect(r.rest.lower).toBeCloseTo(0.0061, 4);
    expect(r.rest.upper).toBeCloseTo(0.1718, 4);
    expect(r.intervalsOverlap).toBe(true);
    expect(r.verdict).toBe("no_clear_difference");
    expect(r.verdictText).toMatch(/^The 95 % interval of the difference includes zero/);
  });

  it("when a rule names no family and no defect, then every family's slabs count and any live, not rejected entry makes a slab affected", async () => {
    const res = await post(processEng, { name: "Fast and weak, any family", familyCode: null, target: null, conditions: FAST_WEAK.conditions });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const r = res.body.record;
    // Flagged: A (263) + P1 (20); affected: 81 SLG + the LFC on an A slab (the rejected and deleted entries do not count).
    expect(r.flagged).toMatchObject({ slabs: 283, affected: 82 });
    // Rest: B (148) + P2 (29); affected 15 SLG + 1 LFC. Unknown: U (5).
    expect(r.rest).toMatchObject({ slabs: 177, affected: 16 });
    expect(r.unknown).toBe(5);
    expect(res.body.target).toBeNull();
  });

  it("when slabs are asked for their flags, then each live rule meeting the slab's family and conditions names it, by slab ids and by heat", async () => {
    const a = groups.A![0]!;
    const b = groups.B1![0]!;
    const p1 = groups.P1![0]!;
    const flags = windowFlagsForSlabs(t.db, [a, b, p1]);
    expect(
      flags
        .get(a)!
        .map((f) => f.name)
        .sort(),
    ).toEqual(["Fast and weak, any family", "Fast casting with a weak brake"]);
    expect(flags.has(b)).toBe(false);
    // P1 meets the speed-and-brake conditions, but the LC rule is for LC only.
    expect(
      flags
        .get(p1)!
        .map((f) => f.name)
        .sort(),
    ).toEqual(["Fast and weak, any family", "Hot tundish on PER"]);
    const ids = t.db.$client.prepare(`select slab_id from slabs where id in (${a}, ${b})`).pluck().all() as string[];
    const res = await inspector.get(`/api/operating-windows/flags?slabIds=${ids.join(",")},NO-SUCH-SLAB`);
    expect(res.status).toBe(200);
    expect(res.body.items).toHaveLength(2);
    expect(res.body.caution).toMatch(/not a cause/);
    const byHeat = await claims.get(`/api/operating-windows/flags?heatNo=${heatOf.P1}`);
    expect(byHeat.status).toBe(200);
    expect(byHeat.body.items).toHaveLength(8);
    for (const s of byHeat.body.items) expect(s.rules.map((r: { name: string }) => r.name).sort()).toEqual(["Fast and weak, any family", "Hot tundish on PER"]);
    expect((await inspector.get("/api/operating-windows/flags?heatNo=NO-SUCH-HEAT")).status).toBe(404);
    const neither = await inspector.get("/api/operating-windows/flags");
    expect(neither.status).toBe(400);
    expect(neither.body.error.code).toBe("validation_failed");
    // The slab and heat pages carry the same names.
    const flaggedId = t.db.$client.prepare("select slab_id from slabs where id = ?").pluck().get(a) as string;
    const slabPage = await inspector.get(`/api/slabs/${flaggedId}`);
    expect([...slabPage.body.windowFlags].sort()).toEqual(["Fast and weak, any family", "Fast casting with a weak brake"]);
    const heatPage = await claims.get(`/api/heats/${heatOf.P1}`);
    expect(heatPage.body.slabs).toHaveLength(8);
    for (const s of heatPage.body.slabs) expect([...s.windowFlags].sort()).toEqual(["Fast and weak, any family", "Hot tundish on PER"]);
    const sound = t.db.$client.prepare("select slab_id from slabs where id = ?").pluck().get(b) as string;
    expect((await inspector.get(`/api/slabs/${sound}`)).body.windowFlags).toEqual([]);
  });

  it("when a rule is changed and then retired, then both are audited, and a retired rule flags nothing and has no record", async () => {
    const res = await post(processEng, { name: "Short-lived", familyCode: "LC", conditions: [{ variable: "casting_speed_m_min", op: "above", value: 1.5 }] });
    expect(res.status).toBe(201);
    const id = res.body.id;
    expect(res.body.record.flagged.slabs).toBe(263 + 100 + 5);
    const changed = await processEng
      .patch(`/api/operating-windows/${id}`)
      .set("Origin", origin())
      .send({ conditions: [{ variable: "casting_speed_m_min", op: "above", value: 1.8 }] });
    expect(changed.status, JSON.stringify(changed.body)).toBe(200);
    expect(changed.body.record.flagged.slabs).toBe(0);
    expect(changed.body.record.verdict).toBeNull();
    expect(audits("operating_window.update", id)).toHaveLength(1);
    const back = await processEng
      .patch(`/api/operating-windows/${id}`)
      .set("Origin", origin())
      .send({ conditions: [{ variable: "casting_speed_m_min", op: "above", value: 1.5 }] });
    expect(back.body.record.flagged.slabs).toBe(368);
    expect(
      windowFlagsForSlabs(t.db, [groups.B1![0]!])
        .get(groups.B1![0]!)
        ?.map((f) => f.name),
    ).toEqual(["Short-lived"]);
    const retired = await processEng.delete(`/api/operating-windows/${id}`).set("Origin", origin());
    expect(retired.status).toBe(200);
    expect(retired.body).toMatchObject({ id, retired: true });
    expect(audits("operating_window.retire", id)).toHaveLength(1);
    expect(windowFlagsForSlabs(t.db, [groups.B1![0]!]).has(groups.B1![0]!)).toBe(false);
    const list = await quality.get("/api/operating-windows");
    expect(list.body.items.some((w: { id: number }) => w.id === id)).toBe(false);
    const all = await quality.get("/api/operating-windows?includeRetired=true");
    expect(all.body.items.find((w: { id: number }) => w.id === id)).toMatchObject({ record: null, retiredAt: expect.any(String) });
    expect((await processEng.delete(`/api/operating-windows/${id}`).set("Origin", origin())).status).toBe(409);
    expect((await processEng.patch(`/api/operating-windows/${id}`).set("Origin", origin()).send({ name: "Again" })).status).toBe(409);
    // Its name is free again for a live rule.
    const again = await post(processEng, { name: "Short-lived", conditions: [{ variable: "superheat_c", op: "above", value: 45 }] });
    expect(again.status).toBe(201);
    expect((await post(processEng, { name: "short-lived", conditions: [{ variable: "superheat_c", op: "above", value: 46 }] })).status).toBe(409);
  });
});

describe("operating windows: refusals", () => {
  const count = () => t.db.$client.prepare("select count(*) from operating_windows").pluck().get() as number;
  const cond = { variable: "casting_speed_m_min", op: "above", value: 1.6 };
  it.each([
    ["an unknown variable", { conditions: [{ ...cond, variable: "tundish_weight" }] }, "conditions.0.variable"],
    ["SQL in the variable", { conditions: [{ ...cond, variable: "casting_speed_m_min > 0) or 1=1; drop table slabs; --" }] }, "conditions.0.variable"],
    ["a column outside the catalogue", { conditions: [{ ...cond, variable: "slab_id" }] }, "conditions.0.variable"],
    ["an unknown comparison", { conditions: [{ ...cond, op: ">=" }] }, "conditions.0.op"],
    ["a value given as text", { conditions: [{ ...cond, value: "1.6" }] }, "conditions.0.value"],
    [
      "five conditions",
      { conditions: ["casting_speed_m_min", "superheat_c", "embr_current_a", "sen_depth_mm", "argon_nl_min"].map((v) => ({ ...cond, variable: v })) },
      "conditions",
    ],
    ["no condition", { conditions: [] }, "conditions"],
    ["the same condition twice", { conditions: [cond, { ...cond, value: 1.7 }] }, "conditions"],
    ["a window no slab can meet", { conditions: [cond, { ...cond, op: "below", value: 1.5 }] }, "conditions"],
    ["a name of 81 characters", { name: "x".repeat(81) }, "name"],
    ["a note of 501 characters", { note: "x".repeat(501) }, "note"],
  ])("when a rule has %s, then it is refused with 400 JSON naming the field, and nothing is written", async (_what, change, field) => {
    const before = count();
    const res = await post(processEng, { ...FAST_WEAK, name: "Refused rule", ...change });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("validation_failed");
    expect(typeof res.body.error.message).toBe("string");
    expect(res.body.error.details.some((d: { path: string }) => d.path === field)).toBe(true);
    expect(count()).toBe(before);
  });

  it("when the family or the defect does not exist, then it is refused with 400 in words", async () => {
    const fam = await post(processEng, { ...FAST_WEAK, name: "No family", familyCode: "NOPE'; --" });
    expect(fam.status).toBe(400);
    expect(fam.body.error).toMatchObject({ code: "unknown_family", message: expect.stringContaining("no grade family") });
    const target = await post(processEng, { ...FAST_WEAK, name: "No target", target: { kind: "type", code: "ZZZ" } });
    expect(target.status).toBe(400);
    expect(target.body.error.code).toBe("unknown_target");
  });

  it("when an inspector, a quality engineer or a claims officer writes, changes or retires a rule, then 403; quality reads the list, the inspector does not", async () => {
    for (const agent of [inspector, quality, claims]) {
      const res = await post(agent, { ...FAST_WEAK, name: "Not allowed" });
      expect(res.status).toBe(403);
      expect(res.body.error.code).toBe("forbidden");
      expect((await agent.patch(`/api/operating-windows/${fastWeakId}`).set("Origin", origin()).send({ name: "Renamed" })).status).toBe(403);
      expect((await agent.delete(`/api/operating-windows/${fastWeakId}`).set("Origin", origin())).status).toBe(403);
    }
    expect((await quality.get("/api/operating-windows")).status).toBe(200);
    expect((await inspector.get("/api/operating-windows")).status).toBe(403);
    expect((await claims.get("/api/operating-windows")).status).toBe(403);
    expect(audits("operating_window.update", fastWeakId)).toHaveLength(0);
  });

  it("when the live rules reach 100, then another is refused with 409 until one is retired", async () => {
    const c = t.db.$client;
    const live = c.prepare("select count(*) from operating_windows where retired_at is null").pluck().get() as number;
    const ins = c.prepare("insert into operating_windows (name, conditions) values (?, ?)");
    const filler: number[] = [];
    for (let i = live; i < 100; i++) filler.push(Number(ins.run(`Filler ${i}`, JSON.stringify([cond])).lastInsertRowid));
    const res = await post(processEng, { ...FAST_WEAK, name: "One too many" });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/100 live rules/);
    // The list still answers with every record.
    const list = await quality.get("/api/operating-windows");
    expect(list.body.items).toHaveLength(100);
    expect(list.body.liveLimit).toBe(100);
    c.prepare(`delete from operating_windows where id in (${filler.join(",")})`).run();
  });
});
