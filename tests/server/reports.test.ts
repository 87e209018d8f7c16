import { afterAll, beforeAll, describe, expect, it } from "vitest";
import ExcelJS from "exceljs";
import * as ss from "simple-statistics";
import type request from "supertest";
import { createResolver } from "../../server/services/conditions.service";
import { fisherExact2x2 } from "../../server/stats/contingency";
import { logisticRegression } from "../../server/stats/logistic";
import { mannWhitney } from "../../server/stats/mann-whitney";
import { wilson } from "../../server/stats/proportions";
import { createTestApp, type TestApp } from "../helpers/test-app";

/**
 * A small plant built by hand: 12 slabs of one heat per day on strand 1 (6 on 1 Dec, 6 on 2 Dec),
 * speeds 1.0 … 2.1 m/min given per slab. Slag spots (SLG) on the slabs cast at 1.2, 1.7, 1.8, 2.0
 * and 2.1 m/min; one more SLG entry on the 1.0 slab is rejected and one on the 1.1 slab deleted, so
 * neither counts; a crack (LFC) on the 1.9 slab. Every expected number below is worked out from this.
 */
let t: TestApp;
let quality: request.Agent;
const speeds = [1.0, 1.1, 1.2, 1.3, 1.4, 1.5, 1.6, 1.7, 1.8, 1.9, 2.0, 2.1];
const slag = new Set([1.2, 1.7, 1.8, 2.0, 2.1]);
const DAY1 = Date.UTC(2026, 11, 1, 6);
const DAY2 = Date.UTC(2026, 11, 2, 6);

beforeAll(async () => {
  t = await createTestApp({ production: false });
  quality = await t.agentFor("quality");
  const c = t.db.$client;
  const caster = c.prepare("select id from casters where code = 'CC2'").pluck().get() as number;
  const grade = c.prepare("select id from grades where code = 'LV-ST32'").pluck().get() as number;
  const strand = c.prepare("select id from strands where caster_id = ? and strand_no = 1").pluck().get(caster) as number;
  const heatIns = c.prepare(
    "insert into heats (heat_no, caster_id, grade_id, cast_start, cast_end, casting_speed_m_min, c_pct) values (?, ?, ?, ?, ?, 1.5, 0.12)",
  );
  const h1 = Number(heatIns.run("HAND1", caster, grade, DAY1, DAY1 + 3_600_000).lastInsertRowid);
  const h2 = Number(heatIns.run("HAND2", caster, grade, DAY2, DAY2 + 3_600_000).lastInsertRowid);
  const slabIns = c.prepare(
    "insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm, weight_t, cast_at, casting_speed_m_min) values (?, ?, ?, ?, 10000, 1500, 230, 26.91, ?, ?)",
  );
  const ids: number[] = [];
  speeds.forEach((v, i) => {
    const heat = i < 6 ? h1 : h2;
    ids.push(Number(slabIns.run(`HAND-${i + 1}`, heat, strand, (i % 6) + 1, (i < 6 ? DAY1 : DAY2) + (i % 6) * 600_000, v).lastInsertRowid));
  });
  createResolver(t.db).resolveAll();
  const type = (code: string) => c.prepare("select id from defect_types where code = ?").pluck().get(code) as number;
  const user = c.prepare("select id from user where email = 'inspector@demo.test'").pluck().get();
  const defIns = c.prepare(
    "insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, severity, stage, disposition, found_at, created_by, review_status, deleted_at) values (?, ?, ?, ?, ?, ?, 'slab_yard', 'scarf', ?, ?, ?, ?)",
  );
  speeds.forEach((v, i) => {
    if (slag.has(v)) defIns.run(ids[i], type("SLG"), "inner", 2500, 300, 2, DAY2, user, "confirmed", null);
  });
  defIns.run(ids[0], type("SLG"), "inner", 100, 100, 3, DAY2, user, "rejected", null);
  defIns.run(ids[1], type("SLG"), "inner", 100, 100, 3, DAY2, user, "new", DAY2);
  defIns.run(ids[9], type("LFC"), "outer", 9500, 1400, 4, DAY2, user, "new", null);
});
afterAll(() => t?.close());

const get = async (path: string) => {
  const res = await quality.get(path);
  expect(res.status, `${path} → ${JSON.stringify(res.body).slice(0, 300)}`).toBe(200);
  return res.body;
};

describe("reports on a plant built by hand", () => {
  it("when rate-by-variable runs for SLG against casting speed in two equal bins, then counts, rates, tests match the hand numbers", async () => {
    const r = await get("/api/reports/rate-by-variable?defectType=SLG&variable=casting_speed_m_min&bins=2&binning=equal&minN=1");
    expect(r.slabs).toBe(12);
    expect(r.affected).toBe(5);
    // Range 1.0–2.1, edge at 1.55: 1.0–1.5 holds 6 slabs with 1 affected (1.2), 1.6–2.1 holds 6 with 4.
    expect(r.bins.map((b: { lower: number; upper: number; slabs: number; affected: number }) => [b.lower, b.upper, b.slabs, b.affected])).toEqual([
      [1.0, 1.55, 6, 1],
      [1.55, 2.1, 6, 4],
    ]);
    expect(r.bins[0].rate).toBeCloseTo(1 / 6, 12);
    expect(r.bins[1].ciLower).toBeCloseTo(wilson(4, 6).lower, 12);
    // Spearman between speed and the 0/1 outcome, by simple-statistics on the raw pairs.
    const y = speeds.map((v) => (slag.has(v) ? 1 : 0));
    expect(r.spearman.rho).toBeCloseTo(ss.sampleRankCorrelation(speeds, y), 10);
    expect(r.pointBiserial.r).toBeCloseTo(ss.sampleCorrelation(speeds, y), 10);
    // U by hand: 1.2 beats 2 sound slabs, 1.7 and 1.8 beat 6, 2.0 and 2.1 beat 7: 2 + 6 + 6 + 7 + 7 = 28.
    expect(r.mannWhitney.u).toBe(28);
    expect(r.mannWhitney.p).toBeCloseTo(mannWhitney([1.2, 1.7, 1.8, 2.0, 2.1], [1.0, 1.1, 1.3, 1.4, 1.5, 1.6, 1.9]).p, 12);
    const fit = logisticRegression(speeds.map((v) => ({ x: [v], successes: slag.has(v) ? 1 : 0, trials: 1 })));
    expect(r.logistic.slope).toBeCloseTo(fit.coefficients[1]!, 8);
    expect(r.logistic.oddsRatio).toBeCloseTo(Math.exp(fit.coefficients[1]!), 8);
    // Per the catalogue's readable step (0.1 m/min) with its Wald 95 % interval, by hand: exp(0.1·(b ± 1.959964·se)).
    const [b, se] = [fit.coefficients[1]!, fit.standardErrors[1]!];
    expect(r.logistic.perStep.step).toBe(0.1);
    expect(r.logistic.perStep.oddsRatio).toBeCloseTo(Math.exp(0.1 * b), 8);
    expect(r.logistic.perStep.ciLower).toBeCloseTo(Math.exp(0.1 * (b - 1.959964 * se)), 6);
    expect(r.logistic.perStep.ciUpper).toBeCloseTo(Math.exp(0.1 * (b + 1.959964 * se)), 6);
    // The interval per step is the one per unit taken to the step's power.
    expect(r.logistic.perStep.ciUpper / r.logistic.oddsRatioCiUpper ** 0.1).toBeCloseTo(1, 10);
    expect(r.distribution.affected).toMatchObject({ n: 5, min: 1.2, median: 1.8, max: 2.1 });
    expect(r.distribution.sound).toMatchObject({ n: 7, min: 1.0, median: 1.4, max: 1.9 });
    expect(r.notes.join(" ")).toContain("Only 5 affected slabs");
  });

  it("when more equal-width bins are asked for than the speeds fill (20 bins of 0.055 m/min over twelve speeds 0.1 apart), then the bins still cover 1.0–2.1 without a gap and a note names the empty spans", async () => {
    const r = await get("/api/reports/rate-by-variable?defectType=SLG&variable=casting_speed_m_min&bins=20&binning=equal&minN=1");
    const bins = r.bins as { lower: number; upper: number; slabs: number }[];
    expect(bins[0]!.lower).toBe(1.0);
    expect(bins[bins.length - 1]!.upper).toBe(2.1);
    for (let k = 1; k < bins.length; k++) expect(bins[k]!.lower).toBe(bins[k - 1]!.upper);
    expect(bins.every((b) => b.slabs >= 1)).toBe(true);
    expect(bins.reduce((n, b) => n + b.slabs, 0)).toBe(12);
    // Edges 1.0 + 0.055·i: the bin from 1.11 to 1.165 holds no speed (1.1 is below it, 1.2 above).
    const note = (r.notes as string[]).find((n) => n.startsWith("No slab had a value in"));
    expect(note).toMatch(
      /^No slab had a value in 1\.11–1\.165 m\/min, .*: those spans were merged into the neighbouring bins, which therefore are wider than the others\.$/,
    );
    expect(r.methods.grouping).toBe("values grouped to 3 decimals; equal grouped values are ties");
  });

  it("when the defect filters change, then so does which slab counts: the crack needs severity 4, rejected and deleted never count", async () => {
    const lfc = await get("/api/reports/rate-by-variable?defectType=LFC&variable=casting_speed_m_min&bins=2&minN=1");
    expect(lfc.affected).toBe(1);
    const sev4 = await get("/api/reports/rate-by-variable?minSeverity=4&variable=casting_speed_m_min&bins=2&minN=1");
    expect(sev4.affected).toBe(1);
    const any = await get("/api/reports/rate-by-variable?variable=casting_speed_m_min&bins=2&minN=1");
    expect(any.affected).toBe(6); // the five slag slabs and the crack; not the rejected 1.0 nor the deleted 1.1
    const otherGrade = await get("/api/reports/rate-by-variable?grade=LV-DQ10&variable=casting_speed_m_min");
    expect(otherGrade.slabs).toBe(0);
    const day1 = await get("/api/reports/rate-by-variable?from=2026-12-01&to=2026-12-01&defectType=SLG&variable=casting_speed_m_min&minN=1");
    expect([day1.slabs, day1.affected]).toEqual([6, 1]);
  });

  it("when the control chart is drawn by day, then p̄ = 5/12 and each day has its own limits", async () => {
    const r = await get("/api/reports/control-chart?defectType=SLG&period=day");
    expect(r.pBar).toBeCloseTo(5 / 12, 12);
    expect(r.points.map((p: { period: string; slabs: number; affected: number }) => [p.period, p.slabs, p.affected])).toEqual([
      ["2026-12-01", 6, 1],
      ["2026-12-02", 6, 4],
    ]);
    // 3σ half-width √(5/12 · 7/12 / 6) · 3 = 0.6038: the upper limit passes 1 and is held there.
    expect(r.points[0].ucl).toBe(1);
    expect(r.points[0].lcl).toBe(0);
  });

  it("when screening runs, then casting speed shows the hand-worked mean difference of 0.36 m/min, and p-values are BH-adjusted", async () => {
    const r = await get("/api/reports/screening?defectType=SLG");
    const speed = r.variables.find((v: { key: string }) => v.key === "casting_speed_m_min");
    // Affected: (1.2 + 1.7 + 1.8 + 2.0 + 2.1)/5 = 1.76; sound: (1.0 + 1.1 + 1.3 + 1.4 + 1.5 + 1.6 + 1.9)/7 = 1.4
    expect(speed.meanAffected).toBeCloseTo(1.76, 12);
    expect(speed.meanSound).toBeCloseTo(1.4, 12);
    expect(speed.effect).toBeCloseTo(0.36, 12);
    expect(speed.fewSlabs).toBe(true);
    // Derived values (listed under their raw condition) have a p but are not counted in BH (issue 12).
    const tested = r.variables.filter((v: { p: number | null; countedInBh: boolean }) => v.p !== null && v.countedInBh);
    expect(tested.length).toBeGreaterThan(0);
    expect(tested.every((v: { p: number; pAdjusted: number }) => v.pAdjusted >= v.p)).toBe(true);
    expect(r.variables.some((v: { key: string; kind: string }) => v.key === "transition" && v.kind === "categorical")).toBe(true);
  });

  it("when the overview runs by day, then totals, the Pareto and the per-1000-t rate add up", async () => {
    const r = await get("/api/reports/overview?period=day");
    expect(r.totals).toMatchObject({ slabs: 12, affected: 6, defects: 6 });
    expect(r.totals.tonnes).toBeCloseTo(12 * 26.91, 6);
    expect(r.totals.per1000t).toBeCloseTo((6 / (12 * 26.91)) * 1000, 9);
    expect(r.pareto.map((p: { code: string; defects: number }) => [p.code, p.defects])).toEqual([
      ["SLG", 5],
      ["LFC", 1],
    ]);
    expect(r.pareto[1].cumulativeShare).toBeCloseTo(1, 12);
  });

  it("when one slab has two slag entries, then the Pareto counts both entries and that slab once (slabs per type), and the totals count its defects", async () => {
    const c = t.db.$client;
    const slab = c.prepare("select id from slabs where slab_id = 'HAND-12'").pluck().get() as number;
    const slagType = c.prepare("select id from defect_types where code = 'SLG'").pluck().get() as number;
    const user = c.prepare("select id from user where email = 'inspector@demo.test'").pluck().get();
    const extra = c
      .prepare(
        "insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, severity, stage, disposition, found_at, created_by, review_status) values (?, ?, 'outer', 7000, 900, 2, 'slab_yard', 'scarf', ?, ?, 'confirmed')",
      )
      .run(slab, slagType, DAY2, user).lastInsertRowid;
    try {
      const r = await get("/api/reports/overview?period=day");
      expect(r.totals).toMatchObject({ slabs: 12, affected: 6, defects: 7 });
      expect(r.pareto.map((p: { code: string; defects: number; slabsAffected: number }) => [p.code, p.defects, p.slabsAffected])).toEqual([
        ["SLG", 6, 5],
        ["LFC", 1, 1],
      ]);
      expect(r.periods.map((p: { period: string; defects: number }) => [p.period, p.defects])).toEqual([
        ["2026-12-01", 1],
        ["2026-12-02", 6],
      ]);
    } finally {
      c.prepare("delete from defects where id = ?").run(extra);
    }
  });

  it("when before and after compares the two days, then the difference is 4/6 − 1/6 = 0.5 and Fisher's test is used (small counts)", async () => {
    const r = await get("/api/reports/before-after?defectType=SLG&mode=periods&aFrom=2026-12-01&aTo=2026-12-01&bFrom=2026-12-02&bTo=2026-12-02");
    expect([r.a.slabs, r.a.affected, r.b.slabs, r.b.affected]).toEqual([6, 1, 6, 4]);
    expect(r.difference.value).toBeCloseTo(0.5, 12);
    expect(r.test.name).toBe("fisher");
    expect(r.test.p).toBeCloseTo(
      fisherExact2x2([
        [1, 5],
        [4, 2],
      ]).pTwoSided,
      12,
    );
  });

  it("when the process window crosses two variables, then slabs without both values are left out and the rest fill the cells (even a single-valued one)", async () => {
    const r = await get("/api/reports/process-window?defectType=SLG&x=casting_speed_m_min&y=embr_current_a&xBins=2&yBins=2&binning=equal&minN=5");
    // No brake current is on record: no slab has both values.
    expect(r.slabs).toBe(0);
    const r2 = await get("/api/reports/process-window?defectType=SLG&x=casting_speed_m_min&y=width_mm&xBins=2&yBins=2&binning=equal&minN=5");
    expect(r2.slabs).toBe(12);
    expect(r2.cells.reduce((s: number, c: { slabs: number }) => s + c.slabs, 0)).toBe(12);
    // Every slab is 1,500 mm wide: one width bin, speed split at 1.55 into 6 and 6.
    expect(r2.y.edges).toEqual([1500, 1500]);
    expect(
      r2.cells.map((c: { xi: number; yi: number; slabs: number; affected: number; sparse: boolean }) => [c.xi, c.yi, c.slabs, c.affected, c.sparse]),
    ).toEqual([
      [0, 0, 6, 1, false],
      [1, 0, 6, 4, false],
    ]);
  });

  it("when positions are asked for, then the slag spots sit on the inner face at 25 % of the length and 20 % of the width", async () => {
    const r = await get("/api/reports/slab-positions?defectType=SLG&alongBins=4&acrossBins=5");
    expect(r.defects).toBe(5);
    const inner = r.grid.find((g: { face: string }) => g.face === "inner");
    // 2,500 of 10,000 mm is the second quarter; 300 of 1,500 mm is the second fifth.
    expect(inner.along).toEqual([0, 5, 0, 0]);
    expect(inner.across).toEqual([0, 5, 0, 0, 0]);
  });

  it("when the input is bad, then 400 with the field named", async () => {
    const bad = await quality.get("/api/reports/rate-by-variable?variable=colour");
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toContain("Unknown variable");
    const grade = await quality.get("/api/reports/screening?grade=NOPE");
    expect(grade.status).toBe(400);
    expect(grade.body.error.message).toBe("Unknown grade: NOPE.");
  });
});

describe("report cache freshness", () => {
  it("when a slab's conditions are recomputed, then the next report sees the new value (no stale cache)", async () => {
    const before = await get("/api/reports/rate-by-variable?defectType=SLG&variable=casting_speed_m_min&bins=2&minN=1");
    expect(before.distribution.affected.max).toBe(2.1);
    const c = t.db.$client;
    const id = c.prepare("select id from slabs where slab_id = 'HAND-12'").pluck().get() as number;
    c.prepare("update slabs set casting_speed_m_min = 2.4 where id = ?").run(id);
    createResolver(t.db).resolve([id]);
    const after = await get("/api/reports/rate-by-variable?defectType=SLG&variable=casting_speed_m_min&bins=2&minN=1");
    expect(after.distribution.affected.max).toBe(2.4);
    // A slab added later is appended to the cache.
    const heat = c.prepare("select heat_id, strand_id from slabs where id = ?").get(id) as { heat_id: number; strand_id: number };
    const added = Number(
      c
        .prepare(
          "insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm, weight_t, cast_at, casting_speed_m_min) values ('HAND-13', ?, ?, 7, 10000, 1500, 230, 26.91, ?, 0.9)",
        )
        .run(heat.heat_id, heat.strand_id, DAY2 + 7 * 600_000).lastInsertRowid,
    );
    createResolver(t.db).resolve([added]);
    const more = await get("/api/reports/rate-by-variable?defectType=SLG&variable=casting_speed_m_min&bins=2&minN=1");
    expect(more.slabs).toBe(13);
    expect(more.distribution.sound.min).toBe(0.9);
    // Put the plant back as it was for the other tests.
    c.prepare("update slabs set casting_speed_m_min = 2.1 where id = ?").run(id);
    c.prepare("delete from slab_conditions where slab_id = ?").run(added);
    c.prepare("delete from slabs where id = ?").run(added);
    createResolver(t.db).resolveAll();
    expect((await get("/api/reports/rate-by-variable?defectType=SLG&variable=casting_speed_m_min&bins=2&minN=1")).slabs).toBe(12);
  });
});

describe("Excel export", () => {
  const binary = (res: request.Response, cb: (err: Error | null, body: Buffer) => void) => {
    const chunks: Buffer[] = [];
    res.on("data", (c: Buffer) => chunks.push(c));
    res.on("end", () => cb(null, Buffer.concat(chunks)));
  };

  it("when rate-by-variable is exported, then the workbook holds the API's numbers, the filters, formats, frozen headers and autofilter", async () => {
    const qs = "defectType=SLG&variable=casting_speed_m_min&bins=2&binning=equal&minN=1";
    const json = await get(`/api/reports/rate-by-variable?${qs}`);
    const res = await quality.get(`/api/reports/rate-by-variable.xlsx?${qs}`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(res.body as never);
    const params = wb.getWorksheet("Parameters")!;
    const pairs = Object.fromEntries(params.getRows(2, params.rowCount)!.map((r) => [String(r.getCell(1).value), r.getCell(2).value]));
    // The Parameters sheet speaks the screen's words: labels and units, not the query's keys.
    expect(pairs).toMatchObject({
      Report: "Rate against a variable",
      "Defect type": "SLG",
      Variable: "Casting speed (m/min)",
      "Least slabs in a bin": "1",
      Binning: "Equal-width",
    });
    expect(Object.keys(pairs)).not.toContain("defectType");
    expect(Object.keys(pairs)).not.toContain("minN");
    const bins = wb.getWorksheet("Bins")!;
    const rows = bins.getRows(2, bins.rowCount - 1)!.map((r) => [1, 2, 3, 4, 5, 6, 7].map((i) => r.getCell(i).value));
    expect(rows).toEqual(json.bins.map((b: Record<string, number>) => [b.lower, b.upper, b.slabs, b.affected, b.rate, b.ciLower, b.ciUpper]));
    expect(bins.getCell("E2").numFmt).toBe("0.00%");
    expect(bins.views[0]).toMatchObject({ state: "frozen", ySplit: 1 });
    expect(bins.autoFilter).toBeDefined();
    const tests = wb.getWorksheet("Tests")!;
    const spearmanRow = tests.getRows(2, tests.rowCount - 1)!.find((r) => r.getCell(1).value === "Spearman ρ")!;
    expect(spearmanRow.getCell(2).value).toBe(json.spearman.rho);
    expect(spearmanRow.getCell(3).value).toBe(json.spearman.p);
  });

  it("when the overview and screening are exported, then their sheets carry the same rows as the JSON", async () => {
    const o = await get("/api/reports/overview?period=day");
    const res = await quality.get("/api/reports/overview.xlsx?period=day").buffer(true).parse(binary);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(res.body as never);
    const pareto = wb.getWorksheet("Pareto")!;
    expect(pareto.getRows(2, pareto.rowCount - 1)!.map((r) => [r.getCell(1).value, r.getCell(3).value])).toEqual(
      o.pareto.map((p: { code: string; defects: number }) => [p.code, p.defects]),
    );
    const s = await get("/api/reports/screening?defectType=SLG");
    const res2 = await quality.get("/api/reports/screening.xlsx?defectType=SLG").buffer(true).parse(binary);
    const wb2 = new ExcelJS.Workbook();
    await wb2.xlsx.load(res2.body as never);
    const sheet = wb2.getWorksheet("Screening")!;
    expect(sheet.getRows(2, sheet.rowCount - 1)!.map((r) => [r.getCell(2).value, r.getCell(8).value ?? null])).toEqual(
      s.variables.map((v: { key: string; pAdjusted: number | null }) => [v.key, v.pAdjusted]),
    );
  });
});

describe("saved reports", () => {
  it("when a user saves a report, then only they see it and can delete it", async () => {
    const saved = await quality
      .post("/api/saved-reports")
      .set("Origin", t.env.BETTER_AUTH_URL)
      .send({ name: "Slag vs speed", reportKind: "rate-by-variable", query: "?defectType=SLG&variable=casting_speed_m_min" });
    expect(saved.status).toBe(201);
    expect(saved.body.query).toBe("defectType=SLG&variable=casting_speed_m_min");
    expect((await get("/api/saved-reports")).reports.map((r: { name: string }) => r.name)).toEqual(["Slag vs speed"]);
    const other = await t.agentFor("process");
    expect((await other.get("/api/saved-reports")).body.reports).toEqual([]);
    expect((await other.delete(`/api/saved-reports/${saved.body.id}`).set("Origin", t.env.BETTER_AUTH_URL)).status).toBe(404);
    expect((await quality.delete(`/api/saved-reports/${saved.body.id}`).set("Origin", t.env.BETTER_AUTH_URL)).status).toBe(200);
  });
});
