import { afterAll, beforeAll, describe, expect, it } from "vitest";
import ExcelJS from "exceljs";
import type request from "supertest";
import { beforeAfterSchema, controlChartSchema, overviewSchema, processWindowSchema, slabPositionsSchema, type RateByVariable } from "@shared/api/reports";
import { createResolver } from "../../server/services/conditions.service";
import { reportWorkbook } from "../../server/services/report-export";
import { periodOf } from "../../server/services/reports/periods";
import { normalQuantileOf, normalUpper } from "../../server/stats/distributions";
import { differenceOfStandardisedRates, pooledMix } from "../../server/stats/standardise";
import { mantelHaenszel, type Stratum2x2 } from "../../server/stats/stratified";
import { buildConfoundedPlant, type ConfoundedPlant } from "../helpers/confounded-plant";
import { createTestApp, type TestApp } from "../helpers/test-app";
import { downloadWorkbook } from "../helpers/workbooks";

/**
 * Before/after within strata, standardised rates, control charts with a baseline, run rules, the
 * Laney p′ chart and the u-chart, ISO weeks, the process window's schema and the Excel fixes (issue 12).
 *
 * One app holds several plants, each in its own dates (every query names its dates):
 * - the confounded plant of tests/helpers/confounded-plant.ts, 2027-01-04 to 2027-03-08;
 * - a hand-built stratified case in June 2026 (ISO weeks 23, 25 and 26), worked out below by hand;
 * - a p-chart sequence of 30 days in March 2025 (cracks, LFC);
 * - an overdispersed sequence of 20 days in May 2025 (pinholes, PIN);
 * - a u-chart case of 3 days in July 2025 (blowholes, BLH, several per slab).
 */
let t: TestApp;
let quality: request.Agent;
let plant: ConfoundedPlant;
const DAY = 86_400_000;
const at = (iso: string, hour = 6) => Date.parse(`${iso}T00:00:00Z`) + hour * 3_600_000;
const isoDay = (ms: number) => new Date(ms).toISOString().slice(0, 10);

/** Slabs of one heat cast on a day; `defects[k]` defects of type `type` on the k-th slab. */
let heatNo = 0;
function addHeat(day: string, grade: "LV-DQ10" | "LV-ST32", defects: number[], type: string) {
  const c = t.db.$client;
  const one = (sql: string, ...a: unknown[]) =>
    c
      .prepare(sql)
      .pluck()
      .get(...a) as number;
  const caster = one("select id from casters where code = 'CC2'");
  const strand = one("select id from strands where caster_id = ? and strand_no = 1", caster);
  const start = at(day);
  const heat = Number(
    c
      .prepare("insert into heats (heat_no, caster_id, grade_id, cast_start, cast_end, casting_speed_m_min, c_pct) values (?, ?, ?, ?, ?, 1.2, 0.1)")
      .run(`CMP${++heatNo}`, caster, one("select id from grades where code = ?", grade), start, start + 3_600_000).lastInsertRowid,
  );
  const typeId = one("select id from defect_types where code = ?", type);
  const user = c.prepare("select id from user where email = 'inspector@demo.test'").pluck().get();
  defects.forEach((k, i) => {
    const slab = Number(
      c
        .prepare(
          "insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm, weight_t, cast_at) values (?, ?, ?, ?, 10000, 1500, 230, 26.91, ?)",
        )
        .run(`CMP${heatNo}-${i + 1}`, heat, strand, i + 1, start + i * 60_000).lastInsertRowid,
    );
    for (let d = 0; d < k; d++) {
      c.prepare(
        "insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, severity, stage, disposition, found_at, created_by, review_status) values (?, ?, 'inner', ?, 300, 2, 'slab_yard', 'scarf', ?, ?, 'confirmed')",
      ).run(slab, typeId, 1000 + d * 1000, start + DAY, user);
    }
  });
}
/** n slabs of which the first x carry one defect. */
const slabs = (n: number, x: number) => Array.from({ length: n }, (_, i) => (i < x ? 1 : 0));

// The p-chart sequence: 20 baseline days (p̄ = 100/1000 = 0.1 exactly), then 8 days a little above,
// then 10 and 13 affected of 50.
const BASELINE = [5, 4, 6, 5, 3, 7, 5, 4, 6, 5, 5, 4, 6, 5, 3, 7, 5, 4, 6, 5];
const LATER = [7, 7, 7, 7, 7, 7, 7, 7, 10, 13];
const MARCH = Array.from({ length: 30 }, (_, i) => `2025-03-${String(i + 1).padStart(2, "0")}`);
// Overdispersed: 100 slabs a day, 1 and 21 affected in turn.
const MAY = Array.from({ length: 20 }, (_, i) => `2025-05-${String(i + 1).padStart(2, "0")}`);
const mayCount = (i: number) => (i % 2 === 0 ? 1 : 21);
// u-chart: defects per slab on three days.
const JULY: [string, number[]][] = [
  ["2025-07-01", [0, 0, 1, 2, 0, 0, 3, 0, 1, 0]],
  ["2025-07-02", [1, 0, 0, 0, 0, 0, 0, 0, 0, 0]],
  ["2025-07-03", [2, 2, 0, 1, 0]],
];

beforeAll(async () => {
  t = await createTestApp({ production: false });
  quality = await t.agentFor("quality");
  // June 2026, by hand: A = week 23 (1–7 June), B = week 25 (15–21 June), and week 26 with PER only.
  addHeat("2026-06-02", "LV-DQ10", slabs(10, 2), "SLG");
  addHeat("2026-06-03", "LV-ST32", slabs(20, 2), "SLG");
  addHeat("2026-06-16", "LV-DQ10", slabs(10, 4), "SLG");
  addHeat("2026-06-17", "LV-ST32", slabs(5, 1), "SLG");
  addHeat("2026-06-24", "LV-ST32", slabs(4, 1), "SLG");
  MARCH.forEach((d, i) => addHeat(d, "LV-ST32", slabs(50, [...BASELINE, ...LATER][i]!), "LFC"));
  MAY.forEach((d, i) => addHeat(d, "LV-ST32", slabs(100, mayCount(i)), "PIN"));
  for (const [d, counts] of JULY) addHeat(d, "LV-ST32", counts, "BLH");
  createResolver(t.db).resolveAll();
  plant = buildConfoundedPlant(t.db);
}, 120_000);
afterAll(() => t?.close());

const get = async (path: string) => {
  const res = await quality.get(path);
  expect(res.status, `${path} → ${JSON.stringify(res.body).slice(0, 400)}`).toBe(200);
  return res.body;
};
const refused = async (path: string) => {
  const res = await quality.get(path);
  expect(res.status, `${path} → ${JSON.stringify(res.body).slice(0, 300)}`).toBe(400);
  return res.body.error as { code: string; message: string; details: unknown };
};

// ---------------------------------------------------------------------------------------------
describe("before and after within strata", () => {
  const SPEED = "mode=variable&variable=casting_speed_m_min&aMin=0.5&aMax=1.49&bMin=1.5&bMax=2.5&defectType=SLG";

  it("when fast and slow casting are compared on the confounded plant, then the crude difference is large and significant, and within grade families the Mantel–Haenszel odds ratio is near 1 with an interval holding 1", async () => {
    const r = beforeAfterSchema.parse(await get(`/api/reports/before-after?${SPEED}&from=${plant.from}&stratifyBy=grade_family`));
    // The issue's complaint: the crude comparison says fast casting is much worse.
    expect(r.difference.value!).toBeGreaterThan(0.1);
    expect(r.difference.lower!).toBeGreaterThan(0);
    expect(r.test.p!).toBeLessThan(1e-10);
    const st = r.stratified!;
    expect(st.reference).toBe("A");
    expect(st.crude.oddsRatio!).toBeGreaterThan(2);
    // Within each family speed does nothing: the pooled odds ratio is near 1 and its interval holds 1.
    expect(st.mantelHaenszel.ciLower!).toBeLessThan(1);
    expect(st.mantelHaenszel.ciUpper!).toBeGreaterThan(1);
    expect(st.mantelHaenszel.oddsRatio!).toBeGreaterThan(0.5);
    expect(st.mantelHaenszel.oddsRatio!).toBeLessThan(2);
    expect(st.changeInEstimate.sentence).toContain("Most of the crude difference between A and B goes with the grade family");
    expect(st.strata.map((s) => s.label)).toEqual(["LC", "PER"]);

    // Independently: the counts read straight from the database, then the stats functions run here.
    const rows = t.db.$client
      .prepare(
        `select f.code as family, c.casting_speed_m_min as v,
                exists(select 1 from defects d join defect_types ty on ty.id = d.type_id
                       where d.slab_id = c.slab_id and ty.code = 'SLG' and d.deleted_at is null and d.review_status <> 'rejected') as hit
         from slab_conditions c join grade_families f on f.id = c.family_id where c.cast_at >= ?`,
      )
      .all(Date.parse(plant.from)) as { family: string; v: number; hit: number }[];
    const cell = (fam: string, lo: number, hi: number) => {
      const g = rows.filter((x) => x.family === fam && x.v >= lo && x.v <= hi);
      return { n: g.length, x: g.filter((x) => x.hit).length };
    };
    const tables: Stratum2x2[] = ["LC", "PER"].map((fam) => {
      const a = cell(fam, 0.5, 1.49);
      const b = cell(fam, 1.5, 2.5);
      return { label: fam, a: b.x, b: b.n - b.x, c: a.x, d: a.n - a.x };
    });
    expect(st.strata.map((s) => [s.a.slabs, s.a.affected, s.b.slabs, s.b.affected])).toEqual(tables.map((s) => [s.c + s.d, s.c, s.a + s.b, s.a]));
    const mh = mantelHaenszel(tables);
    expect(st.mantelHaenszel.oddsRatio).toBeCloseTo(mh.oddsRatio!, 12);
    expect(st.mantelHaenszel.ciLower).toBeCloseTo(mh.ciLower!, 12);
    expect(st.mantelHaenszel.ciUpper).toBeCloseTo(mh.ciUpper!, 12);
    expect(st.mantelHaenszel.chi2).toBeCloseTo(mh.cmh.statistic!, 12);
    expect(st.mantelHaenszel.p).toBeCloseTo(mh.cmh.p!, 12);
    expect(st.breslowDay.chi2).toBeCloseTo(mh.breslowDay.statistic!, 10);
    expect(st.breslowDay.df).toBe(1);
    expect(st.breslowDay.p).toBeCloseTo(mh.breslowDay.p!, 10);
    const groupA = tables.map((s) => ({ label: s.label, n: s.c + s.d, x: s.c }));
    const groupB = tables.map((s) => ({ label: s.label, n: s.a + s.b, x: s.a }));
    const std = differenceOfStandardisedRates(groupA, groupB, pooledMix(groupA, groupB));
    expect(st.standardised.rateA).toBeCloseTo(std.rateA!, 12);
    expect(st.standardised.rateB).toBeCloseTo(std.rateB!, 12);
    expect(st.standardised.difference).toBeCloseTo(std.difference!, 12);
    expect(st.standardised.ciLower).toBeCloseTo(std.ciLower!, 12);
    expect(st.standardised.ciUpper).toBeCloseTo(std.ciUpper!, 12);
    // The standardised difference is far smaller than the crude one and its interval holds 0.
    expect(Math.abs(st.standardised.difference!)).toBeLessThan(r.difference.value! / 2);
    expect(st.standardised.ciLower!).toBeLessThan(0);
    expect(st.standardised.ciUpper!).toBeGreaterThan(0);
    expect(st.methods.reading).toContain("A is the reference group");
    console.log(
      `confounded plant, speed 0.5–1.49 vs 1.5–2.5 m/min: crude difference ${r.difference.value!.toFixed(3)} (p ${r.test.p!.toExponential(1)}), crude OR ${st.crude.oddsRatio!.toFixed(2)}, ` +
        `MH OR ${st.mantelHaenszel.oddsRatio!.toFixed(2)} (${st.mantelHaenszel.ciLower!.toFixed(2)}–${st.mantelHaenszel.ciUpper!.toFixed(2)}), ` +
        `per family ${st.strata.map((s) => `${s.label} ${s.oddsRatio!.toFixed(2)} (${s.ciLower!.toFixed(2)}–${s.ciUpper!.toFixed(2)})`).join(", ")}, ` +
        `standardised difference ${st.standardised.difference!.toFixed(3)} (${st.standardised.ciLower!.toFixed(3)} to ${st.standardised.ciUpper!.toFixed(3)})`,
    );
  });

  it("when two weeks of a small plant are compared within grade families, then every figure matches the hand computation", async () => {
    // A (week 23): LC 2 of 10, PER 2 of 20. B (week 25): LC 4 of 10, PER 1 of 5.
    const r = beforeAfterSchema.parse(
      await get(
        "/api/reports/before-after?mode=periods&aFrom=2026-06-01&aTo=2026-06-07&bFrom=2026-06-15&bTo=2026-06-21&defectType=SLG&stratifyBy=grade_family",
      ),
    );
    const st = r.stratified!;
    expect(st.strata.map((s) => [s.label, s.a.slabs, s.a.affected, s.b.slabs, s.b.affected])).toEqual([
      ["LC", 10, 2, 10, 4],
      ["PER", 20, 2, 5, 1],
    ]);
    // Per stratum, B against A: LC (4·8)/(6·2) = 8/3; PER (1·18)/(4·2) = 9/4.
    expect(st.strata[0]!.oddsRatio).toBeCloseTo(8 / 3, 12);
    expect(st.strata[1]!.oddsRatio).toBeCloseTo(9 / 4, 12);
    // Woolf interval of LC by hand: exp(ln 8/3 ± 1.959964 √(1/4 + 1/6 + 1/2 + 1/8)).
    const z = normalQuantileOf(0.975);
    expect(st.strata[0]!.ciLower).toBeCloseTo(Math.exp(Math.log(8 / 3) - z * Math.sqrt(1 / 4 + 1 / 6 + 1 / 2 + 1 / 8)), 12);
    // Mantel–Haenszel (1959): Σ aᵢdᵢ/nᵢ / Σ bᵢcᵢ/nᵢ = (32/20 + 18/25) / (12/20 + 8/25) = 2.32 / 0.92.
    expect(st.mantelHaenszel.oddsRatio).toBeCloseTo(2.32 / 0.92, 12);
    // Robins–Breslow–Greenland (1986) variance by hand: Pᵢ = (a + d)/n, Qᵢ = (b + c)/n, Rᵢ = ad/n, Sᵢ = bc/n.
    // LC: P 0.6, Q 0.4, R 1.6, S 0.6; PER: P 0.76, Q 0.24, R 0.72, S 0.32.
    const R = 2.32;
    const S = 0.92;
    const PR = 0.6 * 1.6 + 0.76 * 0.72;
    const PSQR = 0.6 * 0.6 + 0.4 * 1.6 + (0.76 * 0.32 + 0.24 * 0.72);
    const QS = 0.4 * 0.6 + 0.24 * 0.32;
    const se = Math.sqrt(PR / (2 * R * R) + PSQR / (2 * R * S) + QS / (2 * S * S));
    expect(se).toBeCloseTo(0.811706, 5); // 0.658867 under the root, worked on paper
    expect(st.mantelHaenszel.ciLower).toBeCloseTo(Math.exp(Math.log(R / S) - z * se), 12);
    expect(st.mantelHaenszel.ciUpper).toBeCloseTo(Math.exp(Math.log(R / S) + z * se), 12);
    // Cochran–Mantel–Haenszel with the ½ correction: Σa = 5; E = 10·6/20 + 5·3/25 = 3.6;
    // Var = 10·10·6·14/(20²·19) + 5·20·3·22/(25²·24) = 21/19 + 0.44; X² = (|5 − 3.6| − ½)²/Var.
    const x2 = (1.4 - 0.5) ** 2 / (21 / 19 + 0.44);
    expect(st.mantelHaenszel.chi2).toBeCloseTo(x2, 12);
    // 1 df: P(X² ≥ x) = 2·P(Z ≥ √x).
    expect(st.mantelHaenszel.p).toBeCloseTo(2 * normalUpper(Math.sqrt(x2)), 12);
    // Breslow–Day at ψ = 2.32/0.92: the expected a under ψ solved here by bisection, then Tarone's correction.
    const psi = R / S;
    const strata = [
      { a: 4, n1: 10, n2: 10, m1: 6 },
      { a: 1, n1: 5, n2: 20, m1: 3 },
    ];
    let bd = 0;
    let sumA = 0;
    let sumE = 0;
    let sumV = 0;
    for (const s of strata) {
      let lo = Math.max(0, s.m1 - s.n2);
      let hi = Math.min(s.n1, s.m1);
      for (let k = 0; k < 200; k++) {
        const mid = (lo + hi) / 2;
        // odds ratio of the fitted table rises with A
        if ((mid * (s.n2 - s.m1 + mid)) / ((s.n1 - mid) * (s.m1 - mid)) < psi) lo = mid;
        else hi = mid;
      }
      const e = (lo + hi) / 2;
      const v = 1 / (1 / e + 1 / (s.n1 - e) + 1 / (s.m1 - e) + 1 / (s.n2 - s.m1 + e));
      bd += (s.a - e) ** 2 / v;
      sumA += s.a;
      sumE += e;
      sumV += v;
    }
    expect(st.breslowDay.uncorrected).toBeCloseTo(bd, 9);
    expect(st.breslowDay.chi2).toBeCloseTo(bd - (sumA - sumE) ** 2 / sumV, 9);
    expect(st.breslowDay.p).toBeCloseTo(2 * normalUpper(Math.sqrt(bd - (sumA - sumE) ** 2 / sumV)), 9);
    // Direct standardisation to the pooled mix (LC 20 slabs, PER 25): A = (20·0.2 + 25·0.1)/45 = 6.5/45,
    // B = (20·0.4 + 25·0.2)/45 = 13/45; Var = Σ w² p(1 − p)/n per group.
    expect(st.standardised.referenceMix).toEqual([
      { label: "LC", slabs: 20, share: 20 / 45 },
      { label: "PER", slabs: 25, share: 25 / 45 },
    ]);
    expect(st.standardised.rateA).toBeCloseTo(6.5 / 45, 12);
    expect(st.standardised.rateB).toBeCloseTo(13 / 45, 12);
    expect(st.standardised.difference).toBeCloseTo(6.5 / 45, 12);
    const w1 = 20 / 45;
    const w2 = 25 / 45;
    const varA = (w1 ** 2 * 0.2 * 0.8) / 10 + (w2 ** 2 * 0.1 * 0.9) / 20;
    const varB = (w1 ** 2 * 0.4 * 0.6) / 10 + (w2 ** 2 * 0.2 * 0.8) / 5;
    expect(st.standardised.ciLower).toBeCloseTo(6.5 / 45 - z * Math.sqrt(varA + varB), 12);
    expect(st.standardised.ciUpper).toBeCloseTo(6.5 / 45 + z * Math.sqrt(varA + varB), 12);
    expect(st.standardised.leftOut).toEqual([]);
    // The crude difference: B 5 of 15 against A 4 of 30.
    expect(r.difference.value).toBeCloseTo(5 / 15 - 4 / 30, 12);
  });

  it("when a family is found in one group only, then the standardised rates leave it out and say so", async () => {
    // A = week 25 (LC and PER), B = week 26 (PER only).
    const r = beforeAfterSchema.parse(
      await get(
        "/api/reports/before-after?mode=periods&aFrom=2026-06-15&aTo=2026-06-21&bFrom=2026-06-22&bTo=2026-06-28&defectType=SLG&stratifyBy=grade_family",
      ),
    );
    const st = r.stratified!;
    expect(st.standardised.leftOut).toEqual([{ label: "LC", group: "A", slabs: 10 }]);
    expect(st.standardised.referenceMix).toEqual([{ label: "PER", slabs: 9, share: 1 }]);
    // Only PER is compared: 1/4 against 1/5.
    expect(st.standardised.difference).toBeCloseTo(1 / 4 - 1 / 5, 12);
    expect(st.strata.find((s) => s.label === "LC")!.oddsRatio).toBeNull();
    expect(st.strata.find((s) => s.label === "LC")!.reason).toContain("no slabs");
    expect(st.notes.join(" ")).toContain("leave out LC (10 slabs, only in A)");
  });
});

describe("before and after refuses what cannot be compared", () => {
  it("when a period runs backwards, then 400 says so in words", async () => {
    const e = await refused("/api/reports/before-after?mode=periods&aFrom=2026-06-07&aTo=2026-06-01&bFrom=2026-06-15&bTo=2026-06-21");
    expect(e.message).toBe("Period A ends (2026-06-01) before it starts (2026-06-07): give its first day first.");
    const e2 = await refused("/api/reports/before-after?mode=periods&aFrom=2026-06-01&aTo=2026-06-07&bFrom=2026-06-21&bTo=2026-06-15");
    expect(e2.message).toContain("Period B ends (2026-06-15) before it starts (2026-06-21)");
  });

  it("when a range runs backwards, then 400 says so in words", async () => {
    const e = await refused("/api/reports/before-after?mode=variable&variable=casting_speed_m_min&aMin=1.5&aMax=1.2&bMin=1.6&bMax=2");
    expect(e.message).toBe("Range A runs from 1.5 down to 1.2 m/min: give the lower end first.");
  });

  it("when the periods overlap, then 400 names the shared days (a slab would count in both groups)", async () => {
    const e = await refused("/api/reports/before-after?mode=periods&aFrom=2026-06-01&aTo=2026-06-16&bFrom=2026-06-15&bTo=2026-06-21");
    expect(e.message).toContain("Periods A and B overlap (2026-06-15 to 2026-06-16)");
    expect(e.message).toContain("would count in both groups");
    // Sharing one day is overlapping too: both ends are whole days.
    const e2 = await refused("/api/reports/before-after?mode=periods&aFrom=2026-06-01&aTo=2026-06-15&bFrom=2026-06-15&bTo=2026-06-21");
    expect(e2.message).toContain("overlap (2026-06-15)");
  });

  it("when the ranges overlap or meet, then 400 explains that both ends are included", async () => {
    const e = await refused("/api/reports/before-after?mode=variable&variable=casting_speed_m_min&aMin=1&aMax=1.5&bMin=1.5&bMax=2");
    expect(e.message).toContain("overlap from 1.5 to 1.5 m/min");
    expect(e.message).toContain("both ends of a range are included");
  });

  it("when a date does not exist in the calendar, then 400 names it rather than rolling it into March", async () => {
    const e = await refused("/api/reports/before-after?mode=periods&aFrom=2033-01-01&aTo=2033-01-31&bFrom=2033-02-01&bTo=2033-02-30");
    expect(e.message).toBe("bTo: 2033-02-30 is not a date in the calendar.");
    const e2 = await refused("/api/reports/before-after?mode=periods&aFrom=2025-02-29&aTo=2025-03-31&bFrom=2025-04-01&bTo=2025-04-30");
    expect(e2.message).toBe("aFrom: 2025-02-29 is not a date in the calendar.");
    // 2024 is a leap year: 29 February exists.
    await get("/api/reports/before-after?mode=periods&aFrom=2024-02-29&aTo=2024-03-31&bFrom=2024-04-01&bTo=2024-04-30");
    const e3 = await refused("/api/reports/control-chart?baselineFrom=2025-03-01&baselineTo=2025-04-31");
    expect(e3.message).toBe("baselineTo: 2025-04-31 is not a date in the calendar.");
  });

  it("when a group holds no slab, then the test's p is null with the reason (not Fisher's p = 1)", async () => {
    const r = beforeAfterSchema.parse(
      await get("/api/reports/before-after?mode=periods&aFrom=2026-06-01&aTo=2026-06-07&bFrom=2030-01-01&bTo=2030-01-31&defectType=SLG"),
    );
    expect(r.b.slabs).toBe(0);
    expect(r.test).toEqual({ name: "none", p: null, method: "no test", reason: "group B has no slab in these filters: there is nothing to compare" });
    expect(r.difference.value).toBeNull();
    // No affected slab in either group: nothing to test either.
    const none = beforeAfterSchema.parse(
      await get("/api/reports/before-after?mode=periods&aFrom=2026-06-01&aTo=2026-06-07&bFrom=2026-06-15&bTo=2026-06-21&defectType=LFC"),
    );
    expect(none.test.p).toBeNull();
    expect(none.test.reason).toContain("no slab of either group is affected");
  });

  it("when stratifyBy names no categorical key, then the schema refuses it in words", async () => {
    const res = await quality.get("/api/reports/before-after?mode=periods&aFrom=2026-06-01&aTo=2026-06-07&bFrom=2026-06-15&bTo=2026-06-21&stratifyBy=colour");
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("validation_failed");
    expect(res.body.error.message).toContain("stratifyBy takes one of grade_family, grade, strand");
  });
});

// ---------------------------------------------------------------------------------------------
describe("standardised rates in the overview", () => {
  it("when the overview of June 2026 is standardised to the grade-family mix, then each week's rate matches the hand computation and a week without LC has none, with the reason", async () => {
    const r = overviewSchema.parse(await get("/api/reports/overview?period=week&from=2026-06-01&to=2026-06-30&defectType=SLG&standardise=grade_family"));
    // Reference mix: every slab in the filters, LC 20 and PER 29 (49 slabs).
    expect(r.standardisation!.referenceMix).toEqual([
      { label: "LC", slabs: 20, share: 20 / 49 },
      { label: "PER", slabs: 29, share: 29 / 49 },
    ]);
    expect(r.standardisation!.reference).toBe("the grade-family mix of every slab in the filters");
    const week = (w: string) => r.periods.find((p) => p.period === w)!;
    // W23: LC 2/10, PER 2/20 → (20·0.2 + 29·0.1)/49 = 6.9/49; crude 4/30 beside it.
    expect(week("2026-W23").rate).toBeCloseTo(4 / 30, 12);
    expect(week("2026-W23").standardised!.rate).toBeCloseTo(6.9 / 49, 12);
    const z = normalQuantileOf(0.975);
    const se23 = Math.sqrt(((20 / 49) ** 2 * 0.2 * 0.8) / 10 + ((29 / 49) ** 2 * 0.1 * 0.9) / 20);
    expect(week("2026-W23").standardised!.ciLower).toBeCloseTo(6.9 / 49 - z * se23, 12);
    expect(week("2026-W23").standardised!.ciUpper).toBeCloseTo(6.9 / 49 + z * se23, 12);
    // W25: LC 4/10, PER 1/5 → (20·0.4 + 29·0.2)/49 = 13.8/49.
    expect(week("2026-W25").standardised!.rate).toBeCloseTo(13.8 / 49, 12);
    // W26 cast PER only: undefined, with the reason.
    expect(week("2026-W26").standardised).toEqual({
      rate: null,
      ciLower: null,
      ciUpper: null,
      reason: "this week has no slab in LC, which the reference mix contains: the standardised rate is undefined",
    });
    expect(r.notes.join(" ")).toContain("1 week lacks a grade family of the reference mix");
    // Without the option the answer is as before: no standardised field.
    const plain = await get("/api/reports/overview?period=week&from=2026-06-01&to=2026-06-30&defectType=SLG");
    expect(plain.periods[0].standardised).toBeUndefined();
    expect(plain.standardisation).toBeUndefined();
  });
});

// ---------------------------------------------------------------------------------------------
describe("control charts", () => {
  const MARCH_Q = "from=2025-03-01&to=2025-03-30&defectType=LFC&period=day";
  const sigma = (p: number, n: number) => Math.sqrt((p * (1 - p)) / n);

  it("when a baseline is chosen, then p̄ and the limits come from the baseline days only and are applied unchanged to the later days", async () => {
    const r = controlChartSchema.parse(await get(`/api/reports/control-chart?${MARCH_Q}&baselineFrom=2025-03-01&baselineTo=2025-03-20`));
    // Baseline: 100 affected of 20 × 50 slabs.
    expect(r.pBar).toBeCloseTo(0.1, 12);
    expect(r.centre).toBeCloseTo(0.1, 12);
    expect(r.baseline).toEqual({ from: "2025-03-01", to: "2025-03-20", firstPeriod: "2025-03-01", lastPeriod: "2025-03-20", periods: 20, slabs: 1000 });
    expect(r.points.map((p) => p.phase)).toEqual([...Array(20).fill("baseline"), ...Array(10).fill("monitoring")]);
    const ucl = 0.1 + 3 * sigma(0.1, 50);
    for (const p of r.points) {
      expect(p.ucl).toBeCloseTo(ucl, 12);
      expect(p.lcl).toBe(0); // 0.1 − 0.127 is below 0
      expect(p.z).toBeCloseTo((p.p - 0.1) / sigma(0.1, 50), 12);
    }
    // Only the last day (13 of 50 = 0.26) is beyond the limit 0.2273.
    expect(r.points.filter((p) => p.outOfControl).map((p) => p.period)).toEqual(["2025-03-30"]);
    // Without a baseline the limits come from all 30 days: p̄ = 179/1500.
    const all = controlChartSchema.parse(await get(`/api/reports/control-chart?${MARCH_Q}`));
    expect(all.pBar).toBeCloseTo(179 / 1500, 12);
    expect(all.baseline).toBeNull();
    expect(all.points[0]!.ucl).toBeCloseTo(179 / 1500 + 3 * sigma(179 / 1500, 50), 12);
    expect(all.points.every((p) => p.phase === "baseline")).toBe(true);
    expect(all.method).toContain("p̄ from every period shown (no baseline chosen)");
    expect(r.method).toContain("p̄ from the 20 baseline periods (Phase I), applied unchanged to the later periods (Phase II)");
  });

  it("when the baseline starts after the first day shown, then the earlier days are marked before the baseline and get the same limits", async () => {
    const r = controlChartSchema.parse(await get(`/api/reports/control-chart?${MARCH_Q}&baselineFrom=2025-03-05&baselineTo=2025-03-20`));
    expect(r.points.slice(0, 5).map((p) => p.phase)).toEqual(["before", "before", "before", "before", "baseline"]);
    // Days 5–20: 80 affected of 800.
    expect(r.pBar).toBeCloseTo(80 / 800, 12);
    expect(r.baseline!.periods).toBe(16);
  });

  it("when run rules are on (the default), then each signalled day names its Western Electric rules, worked out by hand", async () => {
    const r = controlChartSchema.parse(await get(`/api/reports/control-chart?${MARCH_Q}&baselineFrom=2025-03-01&baselineTo=2025-03-20`));
    // σ = √(0.1·0.9/50) = 0.0424; z of 7/50 = 0.94, of 10/50 = 2.36, of 13/50 = 3.77. Days 21–28 are the
    // first eight in a row above the centre (day 20 sits on it): rule 4 on day 28, again on 29 and 30;
    // day 30 is beyond 3σ (rule 1) and the second of three beyond 2σ (days 29, 30: rule 2).
    const signalled = Object.fromEntries(r.points.filter((p) => p.signals.length).map((p) => [p.period, p.signals]));
    expect(signalled).toEqual({ "2025-03-28": [4], "2025-03-29": [4], "2025-03-30": [1, 2, 4] });
    expect(r.rules.on).toBe(true);
    expect(r.rules.legend["4"]).toBe("eight successive points on the same side of the centre line");
    const off = controlChartSchema.parse(await get(`/api/reports/control-chart?${MARCH_Q}&baselineFrom=2025-03-01&baselineTo=2025-03-20&rules=off`));
    expect(off.points.every((p) => p.signals.length === 0)).toBe(true);
    expect(off.rules.on).toBe(false);
    // Beyond the limits is still marked with the rules off.
    expect(off.points.filter((p) => p.outOfControl).length).toBe(1);
  });

  it("when the days vary far more than the binomial allows, then the answer says the Laney p′ chart applies, and chart=laney widens the limits by σ_z", async () => {
    const q = "from=2025-05-01&to=2025-05-20&defectType=PIN&period=day";
    const p = controlChartSchema.parse(await get(`/api/reports/control-chart?${q}`));
    // p̄ = (10·1 + 10·21)/2000 = 0.11; each z = ±0.10/√(0.11·0.89/100) = ±3.196, so every moving range is
    // 6.392 and σ_z = 6.392/1.128 (Laney 2002).
    const sp = sigma(0.11, 100);
    const sigmaZ = (2 * 0.1) / sp / 1.128;
    expect(p.overdispersion!.sigmaZ).toBeCloseTo(sigmaZ, 9);
    expect(p.overdispersion!.applies).toBe(true);
    expect(p.overdispersion!.df).toBe(19);
    // Pearson X² = Σ zᵢ² = 20 · 3.196².
    expect(p.overdispersion!.chi2).toBeCloseTo(20 * (0.1 / sp) ** 2, 9);
    expect(p.overdispersion!.note).toContain("overdispersion");
    expect(p.overdispersion!.note).toContain("The Laney p′ chart (chart=laney) applies");
    expect(p.notes.join(" ")).toContain("Laney p′ chart (chart=laney) applies");
    // The p-chart flags every day; the p′ chart none.
    expect(p.points.filter((x) => x.outOfControl).length).toBe(20);
    const l = controlChartSchema.parse(await get(`/api/reports/control-chart?${q}&chart=laney`));
    expect(l.chart).toBe("laney");
    expect(l.points[0]!.ucl).toBeCloseTo(0.11 + 3 * sp * sigmaZ, 9);
    expect(l.points[0]!.lcl).toBe(0);
    expect(l.points[0]!.z).toBeCloseTo(-0.1 / sp / sigmaZ, 9);
    expect(l.points.filter((x) => x.outOfControl).length).toBe(0);
    expect(l.method).toContain("Laney p′ chart");
    // On the March days (binomial variation) the p-chart applies.
    const march = controlChartSchema.parse(await get(`/api/reports/control-chart?${MARCH_Q}&baselineFrom=2025-03-01&baselineTo=2025-03-20`));
    expect(march.overdispersion!.applies).toBe(false);
    expect(march.overdispersion!.note).toContain("no overdispersion shown, the p-chart applies");
  });

  it("when the u-chart is drawn, then it counts defects per slab (several on one slab) with limits ū ± 3√(ū/n)", async () => {
    const r = controlChartSchema.parse(await get("/api/reports/control-chart?from=2025-07-01&to=2025-07-03&defectType=BLH&chart=u"));
    // Defects 7, 1 and 5 on 10, 10 and 5 slabs; ū = 13/25.
    expect(r.points.map((p) => [p.period, p.slabs, p.defects, p.affected])).toEqual([
      ["2025-07-01", 10, 7, 4],
      ["2025-07-02", 10, 1, 1],
      ["2025-07-03", 5, 5, 3],
    ]);
    expect(r.centre).toBeCloseTo(13 / 25, 12);
    expect(r.pBar).toBeNull();
    expect(r.defects).toBe(13);
    expect(r.points.map((p) => p.value)).toEqual([0.7, 0.1, 1]);
    expect(r.points[0]!.ucl).toBeCloseTo(0.52 + 3 * Math.sqrt(0.52 / 10), 12);
    expect(r.points[2]!.ucl).toBeCloseTo(0.52 + 3 * Math.sqrt(0.52 / 5), 12);
    expect(r.points[1]!.lcl).toBe(0);
    expect(r.overdispersion).toBeNull();
    expect(r.method).toContain("u-chart");
  });

  it("when a baseline is half given, reversed or empty, or the u-chart is asked to standardise, then 400 in words", async () => {
    expect((await refused(`/api/reports/control-chart?${MARCH_Q}&baselineFrom=2025-03-01`)).message).toBe(
      "Give both the first day (baselineFrom) and the last day (baselineTo) of the baseline, or neither.",
    );
    expect((await refused(`/api/reports/control-chart?${MARCH_Q}&baselineFrom=2025-03-20&baselineTo=2025-03-01`)).message).toContain(
      "The baseline ends (2025-03-01) before it starts (2025-03-20)",
    );
    expect((await refused(`/api/reports/control-chart?${MARCH_Q}&baselineFrom=2024-01-01&baselineTo=2024-01-31`)).message).toContain(
      "holds no slab in these filters",
    );
    expect((await refused(`/api/reports/control-chart?${MARCH_Q}&chart=u&standardise=grade_family`)).message).toContain("the u-chart counts defects per slab");
    // No affected slab: Laney's z-scores are undefined, so the p′ chart has no limits to draw.
    expect((await refused("/api/reports/control-chart?from=2026-06-01&to=2026-06-30&defectType=LFC&chart=laney")).message).toBe(
      "The Laney p′ chart cannot be drawn on these slabs: no affected slab in the baseline: the z-scores are undefined. The p-chart (chart=p) can.",
    );
    const bad = await quality.get(`/api/reports/control-chart?${MARCH_Q}&chart=np`);
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toContain("chart is p (share of slabs affected), laney (Laney p′) or u (defects per slab)");
  });

  it("when the control chart is standardised to the grade-family mix, then each day carries its standardised rate beside the crude one", async () => {
    const r = controlChartSchema.parse(
      await get("/api/reports/control-chart?from=2026-06-01&to=2026-06-30&defectType=SLG&period=week&standardise=grade_family"),
    );
    expect(r.points.map((p) => p.period)).toEqual(["2026-W23", "2026-W25", "2026-W26"]);
    expect(r.points[0]!.standardised!.rate).toBeCloseTo(6.9 / 49, 12);
    expect(r.points[2]!.standardised!.rate).toBeNull();
    expect(r.standardisation!.referenceMix.map((m) => m.slabs)).toEqual([20, 29]);
    expect(r.notes.join(" ")).toContain("The limits are for the crude share affected");
  });
});

// ---------------------------------------------------------------------------------------------
describe("ISO 8601 week labels", () => {
  it("when days around the turn of several years are labelled, then they carry their ISO week (week 1 holds the year's first Thursday)", () => {
    // By hand: 2020 began on a Wednesday, so Thu 31 Dec 2020 still belongs to 2020, week 53, and so does
    // Sun 3 Jan 2021; Mon 4 Jan 2021 starts 2021-W01. 1 Jan 2026 is a Thursday: 2026-W01. 1 Jan 2027 is a
    // Friday whose Thursday (31 Dec 2026) is in 2026: 2026-W53. 1 Jan 2033 is a Saturday: Mon 3 Jan 2033
    // starts the week of Thu 6 Jan, 2033-W01. (Also checked with Python's date.isocalendar.)
    const cases: [string, string][] = [
      ["2020-12-31", "2020-W53"],
      ["2021-01-03", "2020-W53"],
      ["2021-01-04", "2021-W01"],
      ["2026-01-01", "2026-W01"],
      ["2027-01-01", "2026-W53"],
      ["2033-01-02", "2032-W53"],
      ["2033-01-03", "2033-W01"],
      ["2024-12-30", "2025-W01"],
      ["2015-12-31", "2015-W53"],
      ["2010-01-03", "2009-W53"],
      ["2008-12-29", "2009-W01"],
      ["2026-06-01", "2026-W23"],
    ];
    expect(cases.map(([d]) => [d, periodOf(at(d, 12), "week")])).toEqual(cases);
    // Labels follow the UTC day: the last millisecond of a Sunday is still that week.
    expect(periodOf(Date.parse("2021-01-03T23:59:59.999Z"), "week")).toBe("2020-W53");
  });

  it("when every day from 1999 to 2041 is labelled, then the labels agree with counting Mondays, restarting at week 1 on the Monday of the week that holds 4 January", () => {
    // Independent of the formula: walk the days; each Monday starts the next week, except that the
    // Monday between 29 December and 4 January starts week 1 of the following year.
    let year = 1999;
    let week = 52; // Mon 27 Dec 1999 is 1999-W52
    for (let d = Date.UTC(1999, 11, 27); d < Date.UTC(2041, 0, 1); d += DAY) {
      const date = new Date(d);
      if (date.getUTCDay() === 1 && d > Date.UTC(1999, 11, 27)) {
        const jan4 = Date.UTC(date.getUTCMonth() === 11 ? date.getUTCFullYear() + 1 : date.getUTCFullYear(), 0, 4);
        if (d <= jan4 && jan4 - d < 7 * DAY) {
          year = new Date(jan4).getUTCFullYear();
          week = 1;
        } else week++;
      }
      expect(periodOf(d, "week"), isoDay(d)).toBe(`${year}-W${String(week).padStart(2, "0")}`);
    }
  });
});

// ---------------------------------------------------------------------------------------------
describe("process window contract", () => {
  it("when no slab has a value for an axis, then there are no cells and the answer fits the schema (no null bounds)", async () => {
    const body = await get("/api/reports/process-window?from=2025-03-01&to=2025-03-30&x=casting_speed_m_min&y=embr_current_a");
    const r = processWindowSchema.parse(body);
    expect(r.cells).toEqual([]);
    expect(r.slabs).toBe(0);
    expect(r.notes[0]).toBe("No slab in these filters has a value for EMBr current: there is no window to draw.");
    // With values on both axes every cell bound is a number.
    const full = processWindowSchema.parse(
      await get(`/api/reports/process-window?from=${plant.from}&x=casting_speed_m_min&y=embr_current_a&xBins=3&yBins=3&defectType=SLG`),
    );
    expect(full.cells.length).toBe(9);
    expect(full.cells.every((c) => [c.xLower, c.xUpper, c.yLower, c.yUpper].every(Number.isFinite))).toBe(true);
    // The OpenAPI document declares the bounds as numbers, which the answer now always gives.
    const doc = await get("/api/openapi.json");
    const cell = doc.paths["/api/reports/process-window"].get.responses["200"].content["application/json"].schema.properties.cells.items;
    expect(cell.properties.xLower.type).toBe("number");
    expect(cell.required).toContain("xLower");
  });
});

// ---------------------------------------------------------------------------------------------
describe("Excel exports", () => {
  const workbook = (path: string) => downloadWorkbook(quality, path);
  const parameters = (wb: ExcelJS.Workbook) => {
    const ws = wb.getWorksheet("Parameters")!;
    return ws.getRows(2, ws.rowCount - 1)!.map((r) => [String(r.getCell(1).value), String(r.getCell(2).value)] as [string, string]);
  };
  const rowsOf = (ws: ExcelJS.Worksheet) => ws.getRows(2, ws.rowCount - 1)!.map((r) => (r.values as unknown[]).slice(1));
  const headersOf = (ws: ExcelJS.Worksheet) => (ws.getRow(1).values as unknown[]).slice(1);

  it("when the stratified before/after is exported, then strata and pooled figures are numbers, intervals two number columns, and the Parameters speak the screen's words", async () => {
    const qs = "mode=periods&aFrom=2026-06-01&aTo=2026-06-07&bFrom=2026-06-15&bTo=2026-06-21&defectType=SLG&stratifyBy=grade_family";
    const json = beforeAfterSchema.parse(await get(`/api/reports/before-after?${qs}`));
    const wb = await workbook(`/api/reports/before-after.xlsx?${qs}`);
    const strata = wb.getWorksheet("Within grade family")!;
    expect(headersOf(strata).slice(10, 13)).toEqual(["Odds ratio B against A", "Odds ratio 95 % CI lower", "Odds ratio 95 % CI upper"]);
    expect(rowsOf(strata).map((r) => [r[0], r[10], r[11], r[12]])).toEqual(json.stratified!.strata.map((s) => [s.label, s.oddsRatio, s.ciLower, s.ciUpper]));
    const pooled = wb.getWorksheet("Pooled over strata")!;
    const mh = rowsOf(pooled)[1]!;
    expect(mh.slice(1, 7)).toEqual([
      json.stratified!.mantelHaenszel.oddsRatio,
      json.stratified!.mantelHaenszel.ciLower,
      json.stratified!.mantelHaenszel.ciUpper,
      json.stratified!.mantelHaenszel.chi2,
      1,
      json.stratified!.mantelHaenszel.p,
    ]);
    expect(typeof mh[2]).toBe("number");
    const mix = rowsOf(wb.getWorksheet("Reference mix")!);
    expect(mix).toEqual([
      ["LC", 20, 20 / 45],
      ["PER", 25, 25 / 45],
    ]);
    const params = parameters(wb);
    expect(params).toContainEqual(["Report", "Before and after"]);
    expect(params).toContainEqual(["Compare", "Two periods"]);
    expect(params).toContainEqual(["Compare within", "Grade family"]);
    expect(params).toContainEqual(["A (before) from", "2026-06-01"]);
    expect(params).toContainEqual(["Defect type", "SLG"]);
    expect(params.map(([k]) => k)).not.toContain("stratifyBy");
    expect(params.some(([k, v]) => k === "Method" && v.includes("A is the reference group"))).toBe(true);
  });

  it("when a range comparison and the rate against a variable are exported, then variables carry their labels and units, and the odds-ratio interval is two number columns", async () => {
    const wb = await workbook(
      `/api/reports/before-after.xlsx?mode=variable&variable=casting_speed_m_min&aMin=0.5&aMax=1.49&bMin=1.5&bMax=2.5&from=${plant.from}&defectType=SLG`,
    );
    const params = parameters(wb);
    expect(params).toContainEqual(["Variable", "Casting speed (m/min)"]);
    expect(params).toContainEqual(["A from (m/min)", "0.5"]);
    expect(params).toContainEqual(["Cast from", plant.from]);
    const qs = `variable=embr_current_a&from=${plant.from}&defectType=SLG&minN=30`;
    const json = (await get(`/api/reports/rate-by-variable?${qs}`)) as RateByVariable;
    const rb = await workbook(`/api/reports/rate-by-variable.xlsx?${qs}`);
    expect(parameters(rb)).toContainEqual(["Variable", "EMBr current (A)"]);
    expect(parameters(rb)).toContainEqual(["Least slabs in a bin", "30"]);
    // Method lines name the test in words, not by the answer's keys.
    const methods = parameters(rb)
      .filter(([k]) => k === "Method")
      .map(([, v]) => v);
    expect(methods.some((m) => m.startsWith("Point-biserial r: "))).toBe(true);
    expect(methods.some((m) => /^(pointBiserial|mannWhitney|spearman):/.test(m))).toBe(false);
    const tests = rb.getWorksheet("Tests")!;
    // Per the readable step first (per 100 A, as the screen leads with), then per one unit.
    const ors = tests.getRows(2, tests.rowCount - 1)!.filter((r) => String(r.getCell(1).value).startsWith("Odds ratio"));
    expect(ors.map((r) => r.getCell(1).value)).toEqual(["Odds ratio per 100 A", "Odds ratio per A"]);
    const [step, or] = ors as [ExcelJS.Row, ExcelJS.Row];
    expect([step.getCell(2).value, step.getCell(4).value, step.getCell(5).value]).toEqual([
      json.logistic.perStep.oddsRatio,
      json.logistic.perStep.ciLower,
      json.logistic.perStep.ciUpper,
    ]);
    expect([or.getCell(2).value, or.getCell(4).value, or.getCell(5).value]).toEqual([
      json.logistic.oddsRatio,
      json.logistic.oddsRatioCiLower,
      json.logistic.oddsRatioCiUpper,
    ]);
    expect(typeof or.getCell(4).value).toBe("number");
    // The Mann–Whitney p is the JSON's number, in a format that shows a tiny p in scientific notation.
    const mw = tests.getRows(2, tests.rowCount - 1)!.find((r) => r.getCell(1).value === "Mann–Whitney U")!;
    expect(mw.getCell(3).value).toBe(json.mannWhitney.p);
    expect(mw.getCell(3).numFmt).toBe("[<0.0001]0.00E+00;0.0000");
  });

  it("when a p-value underflowed to 0, then the workbook writes the smallest positive double Excel holds, not 0, and says so", async () => {
    // The report object of a rate against a variable whose Mann–Whitney p underflowed (the screen says < 10⁻¹⁵).
    const fake = {
      variable: { key: "mold_level_sd_mm", label: "Mold level fluctuation (s.d.)", unit: "mm" },
      slabs: 10,
      affected: 5,
      slabsWithoutValue: 0,
      bins: [],
      spearman: { rho: 0.9, p: 0 },
      pointBiserial: { r: 0.9, p: 1e-40 },
      logistic: {
        intercept: -3,
        slope: 2,
        oddsRatio: 7.39,
        oddsRatioCiLower: 5.1,
        oddsRatioCiUpper: 10.7,
        perStep: { step: 0.1, oddsRatio: 1.22, ciLower: 1.18, ciUpper: 1.27 },
        p: 0,
        converged: true,
      },
      mannWhitney: { u: 25, p: 0 },
      distribution: { affected: { n: 5, min: 1, q1: 1, median: 1, q3: 1, max: 1, mean: 1 }, sound: { n: 5, min: 1, q1: 1, median: 1, q3: 1, max: 1, mean: 1 } },
      strip: { affected: [], sound: [] },
      methods: {},
      notes: [],
    } as unknown as RateByVariable;
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load((await reportWorkbook("rate-by-variable", "variable=mold_level_sd_mm", fake, "test")) as never);
    const tests = wb.getWorksheet("Tests")!;
    const p = (name: string) =>
      tests
        .getRows(2, tests.rowCount - 1)!
        .find((r) => r.getCell(1).value === name)!
        .getCell(3).value;
    expect(p("Mann–Whitney U")).toBe(2.2250738585072014e-308);
    expect(p("Spearman ρ")).toBe(2.2250738585072014e-308);
    expect(p("Point-biserial r")).toBe(1e-40);
    expect(parameters(wb).find(([k]) => k === "Reading")![1]).toContain("underflowed");
    expect(parameters(wb)).toContainEqual(["Variable", "Mold level fluctuation (s.d.) (mm)"]);
  });

  it("when the control chart with a baseline is exported, then every point's limits, z, phase and rules are in the sheet as in the JSON", async () => {
    const qs = "from=2025-03-01&to=2025-03-30&defectType=LFC&period=day&baselineFrom=2025-03-01&baselineTo=2025-03-20";
    const json = controlChartSchema.parse(await get(`/api/reports/control-chart?${qs}`));
    const wb = await workbook(`/api/reports/control-chart.xlsx?${qs}`);
    const ws = wb.getWorksheet("p-chart")!;
    expect(headersOf(ws).slice(0, 12)).toEqual([
      "Day",
      "Slabs",
      "Affected slabs",
      "p (share affected)",
      "UCL",
      "LCL",
      "Out of control",
      "Phase",
      "Defects",
      "Centre line p̄",
      "z (σ from the centre)",
      "Run rules signalled",
    ]);
    const rows = rowsOf(ws);
    expect(rows.map((r) => [r[0], r[3], r[4], r[5], r[7], r[10], r[11] ?? ""])).toEqual(
      json.points.map((p) => [p.period, p.p, p.ucl, p.lcl, p.phase === "baseline" ? "baseline" : "after the baseline", p.z, p.signals.join(", ")]),
    );
    const params = parameters(wb);
    expect(params).toContainEqual(["Baseline from", "2025-03-01"]);
    expect(params).toContainEqual(["One point per", "Day"]);
    expect(params.some(([k, v]) => k === "Method" && v.includes("Western Electric"))).toBe(true);
    const limits = rowsOf(wb.getWorksheet("Limits")!);
    expect(limits[0]!.slice(0, 2)).toEqual(["Centre line p̄ (share affected)", json.centre]);
  });

  it("when the standardised overview is exported, then the standardised rate and its interval stand as numbers beside the crude rate", async () => {
    const qs = "period=week&from=2026-06-01&to=2026-06-30&defectType=SLG&standardise=grade_family";
    const json = overviewSchema.parse(await get(`/api/reports/overview?${qs}`));
    const wb = await workbook(`/api/reports/overview.xlsx?${qs}`);
    const ws = wb.getWorksheet("By period")!;
    const h = headersOf(ws);
    const col = (name: string) => h.indexOf(name);
    expect(col("Standardised 95 % CI upper")).toBeGreaterThan(0);
    expect(
      rowsOf(ws).map((r) => [
        r[0],
        r[col("Rate")],
        r[col("Standardised rate")] ?? null,
        r[col("Standardised 95 % CI lower")] ?? null,
        r[col("Standardised 95 % CI upper")] ?? null,
      ]),
    ).toEqual(json.periods.map((p) => [p.period, p.rate, p.standardised!.rate, p.standardised!.ciLower, p.standardised!.ciUpper]));
    expect(parameters(wb)).toContainEqual(["Standardised to", "the grade-family mix of every slab in the filters"]);
    expect(parameters(wb)).toContainEqual(["Rates by", "ISO week"]);
  });

  it("when the overview, the process window and the positions on the slab are exported, then the first two name their interval method and the positions carry the table across the face as the JSON has it", async () => {
    const wilson =
      "Each share of slabs affected with its Wilson score interval, 95 %, no continuity correction (Wilson 1927; Newcombe 1998, Stat. Med. 17:857, method 3).";
    expect(parameters(await workbook(`/api/reports/overview.xlsx?from=${plant.from}&defectType=SLG`))).toContainEqual(["Method", wilson]);
    expect(
      parameters(await workbook(`/api/reports/process-window.xlsx?from=${plant.from}&x=casting_speed_m_min&y=embr_current_a&xBins=3&yBins=3&defectType=SLG`)),
    ).toContainEqual(["Method", wilson]);
    const json = slabPositionsSchema.parse(await get(`/api/reports/slab-positions?from=${plant.from}`));
    const surfaces = json.grid.filter((g) => g.face !== "section");
    expect(surfaces.some((g) => g.across.some((n) => n > 0))).toBe(true);
    const across = (await workbook(`/api/reports/slab-positions.xlsx?from=${plant.from}`)).getWorksheet("Across the face")!;
    expect(headersOf(across)[0]).toBe("Face");
    expect(headersOf(across)[1]).toBe("0–20 % of width across the face");
    expect(rowsOf(across)).toEqual(surfaces.map((g) => [g.face, ...g.across]));
  });
});
