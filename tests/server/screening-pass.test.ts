/**
 * Issue 14, screening's one pass per condition (server/services/reports/screening.ts, numericPass):
 * besides Welch's sums it groups the slabs with a value by their grid key for the crude fit (and
 * counts them per key for the interquartile range), and by their grid key and the levels of the
 * categorical adjustment terms for the adjusted fit, instead of the fits grouping them again
 * (collapseByPattern) and the quartiles counting them again. The crude and adjusted odds ratios per
 * IQR, their intervals, z and p, and the IQR must be those of the fits' own grouping and of sorted
 * values, to the last digit: checked for every condition, crude and adjusted (one and two
 * categorical terms), and for a condition whose grid keys spread wider than a lookup holds (one
 * heat's mold level fluctuation far off the scale), where the fit hashes.
 *
 * On a real SQLite file: the confounded plant of 1,000 heats × 8 slabs (tests/helpers/confounded-plant.ts).
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { screeningQuerySchema } from "@shared/api/reports";
import { VARIABLES } from "@shared/variables";
import { slabFacts, slabFactsChanged } from "../../server/services/report-cache";
import { completeRows, fitTerms, gridOf, groupedValues, MAX_PATTERNS, modelTerms, numericTerm } from "../../server/services/reports/adjusted";
import { buildScope, finite, scan } from "../../server/services/reports/scope";
import { numericPass, screening } from "../../server/services/reports/screening";
import { configureScreeningThreads, screeningThreadSettings } from "../../server/services/reports/screening-threads";
import { fitsOnCallersGroupingSoFar, oddsRatioForStep, ROWS_CHECKED } from "../../server/stats/logistic-multi";
import { scratch } from "../../server/stats/scratch";
import { buildConfoundedPlant, plantWriter } from "../helpers/confounded-plant";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
const threads = screeningThreadSettings();
/** Mold level fluctuation has two decimals (grid step 0.001 mm): 5,000 mm is 5 million steps from the rest. */
const WIDE = "mold_level_sd_mm";
const FAR = 5_000;
/**
 * Argon flow has one decimal (grid step 0.01 NL/min): 10,000 NL/min is a million steps from the rest,
 * few enough for the crude fit to group by lookup, too many beside the grade family's and the
 * strand's levels (the adjusted fit hashes).
 */
const HALF_WIDE = "argon_nl_min";
const HALF_FAR = 10_000;

beforeAll(async () => {
  t = await createTestApp({ beforeStart: (db) => buildConfoundedPlant(db, { heats: 1000 }) });
  const first = "(select min(id) from heats)";
  t.db.$client.prepare(`update heats set ${WIDE} = ${FAR} where id = ${first}`).run();
  t.db.$client.prepare(`update slab_conditions set ${WIDE} = ${FAR} where heat_id = ${first}`).run();
  const last = "(select max(id) from heats)";
  t.db.$client.prepare(`update heats set ${HALF_WIDE} = ${HALF_FAR} where id = ${last}`).run();
  t.db.$client.prepare(`update slab_conditions set ${HALF_WIDE} = ${HALF_FAR} where heat_id = ${last}`).run();
  slabFactsChanged(t.db);
  configureScreeningThreads({ threads: 0 });
}, 120_000);
afterAll(async () => {
  configureScreeningThreads(threads);
  await t?.close();
});

/** Type 7 quartiles (R's default) of the sorted values, as interquartileRange words them. */
function iqrOfSorted(values: Float64Array, rows: Int32Array) {
  const sorted = Float64Array.from(rows, (i) => values[i]!).sort();
  const quantile = (q: number) => {
    const h = (sorted.length - 1) * q;
    const f = Math.floor(h);
    const a = sorted[f]!;
    const b = sorted[Math.min(sorted.length - 1, f + 1)]!;
    return a + (h - f) * (b - a);
  };
  return Number((quantile(0.75) - quantile(0.25)).toPrecision(12));
}

/**
 * The crude row of one condition the long way: its values, its complete slabs, the fit's own
 * grouping; and the adjusted test's numbers where the screening adjusts (for categorical terms).
 */
function crudeTheLongWay(query: Record<string, string>, key: string) {
  const q = screeningQuerySchema.parse(query);
  const sc = scan(t.db, buildScope(t.db, q));
  const values = groupedValues(sc, key);
  const term = numericTerm(key, values);
  const { rows } = completeRows(sc, [term]);
  const fit = fitTerms(sc, [term], rows, q.se, false, true);
  const iqr = iqrOfSorted(values, rows);
  const others = modelTerms(t.db, sc, q.adjustFor).filter((x) => x.key !== key);
  const adjustedFit = q.adjustFor.length > 0 ? fitTerms(sc, [term, ...others], rows, q.se, true, true) : null;
  const at = adjustedFit?.terms.find((x) => x.variable === term.label);
  const adjustedOr = at && at.coef !== null && at.se !== null && iqr > 0 ? oddsRatioForStep(at.coef, at.se, iqr) : null;
  const c = fit.terms[0]!;
  // As screening words it: no odds ratio per IQR where the fit has no slope or the IQR is 0.
  const or = c.coef === null || c.se === null || !(iqr > 0) ? null : oddsRatioForStep(c.coef, c.se, iqr);
  return {
    iqr,
    crude: or
      ? { oddsRatioPerIqr: finite(or.oddsRatio ?? NaN), ciLower: finite(or.ciLower ?? NaN), ciUpper: finite(or.ciUpper ?? NaN), p: finite(c.p ?? NaN) }
      : { oddsRatioPerIqr: null, ciLower: null, ciUpper: null, p: c.p ?? null },
    adjusted: adjustedOr
      ? {
          oddsRatioPerIqr: finite(adjustedOr.oddsRatio ?? NaN),
          ciLower: finite(adjustedOr.ciLower ?? NaN),
          ciUpper: finite(adjustedOr.ciUpper ?? NaN),
          p: finite(at!.p ?? NaN),
          statistic: finite(at!.z ?? NaN),
        }
      : null,
    keySpan: (() => {
      let lo = Infinity;
      let hi = -Infinity;
      const scale = term.scale!;
      for (const i of rows) {
        lo = Math.min(lo, Math.round(values[i]! * scale));
        hi = Math.max(hi, Math.round(values[i]! * scale));
      }
      return hi - lo + 1;
    })(),
  };
}

describe("screening's one pass per condition", () => {
  for (const [name, query] of [
    ["crude", { defectType: "SLG", adjustFor: "none" }],
    ["adjusted for the grade family", { defectType: "SLG" }],
    ["adjusted for the grade family and the strand, with model-based SEs", { defectType: "SLG", adjustFor: "grade_family,strand", se: "model" }],
    ["with model-based SEs", { defectType: "SLG", adjustFor: "none", se: "model" }],
  ] as const) {
    it(`when a screening is ${name}, then every condition's IQR and crude (and adjusted) odds ratio per IQR equal the fits' own grouping and sorted quartiles, digit for digit`, () => {
      const before = fitsOnCallersGroupingSoFar();
      const out = screening(t.db, screeningQuerySchema.parse(query));
      const onPassGrouping = fitsOnCallersGroupingSoFar() - before;
      let compared = 0;
      let adjustedCompared = 0;
      for (const v of VARIABLES) {
        const row = out.variables.find((r) => r.key === v.key)!;
        if (!row.testable) continue;
        const long = crudeTheLongWay(query, v.key);
        expect({ key: v.key, iqr: row.iqr, crude: row.crude }).toEqual({ key: v.key, iqr: long.iqr, crude: long.crude });
        if (long.adjusted) {
          const a = row.adjusted!;
          expect({ key: v.key, oddsRatioPerIqr: a.oddsRatioPerIqr, ciLower: a.ciLower, ciUpper: a.ciUpper, p: a.p, statistic: a.statistic }).toEqual({
            key: v.key,
            ...long.adjusted,
          });
          adjustedCompared++;
        } else expect({ key: v.key, or: row.adjusted?.oddsRatioPerIqr ?? null }).toEqual({ key: v.key, or: null });
        compared++;
      }
      expect(compared).toBeGreaterThanOrEqual(10);
      if (name.startsWith("adjusted")) expect(adjustedCompared).toBeGreaterThanOrEqual(10);
      else expect(adjustedCompared).toBe(0);
      // The pass's groupings are the ones the fits used: every crude fit but the wide condition's, and
      // (adjusting) every adjusted fit but the wide and the half-wide conditions'.
      const testable = VARIABLES.filter((v) => out.variables.find((r) => r.key === v.key)!.testable).length;
      expect(onPassGrouping).toBe(name.startsWith("adjusted") ? 2 * testable - 3 : testable - 1);
      const wide = out.variables.find((r) => r.key === WIDE)!;
      expect(wide.crude?.oddsRatioPerIqr).toBeGreaterThan(0);
    });
  }

  it("when screenings of other scopes ran before, then a screening's reused scope and grade-family grid hold its own slabs, flags and levels only", () => {
    const size = slabFacts(t.db).size;
    // Edge cracks on slabs without a sliver, the last of them in the narrow scope: the wider screening's flags are not the narrow one's.
    const w = plantWriter(t.db);
    const clean = t.db.$client
      .prepare("select id from slabs where id not in (select slab_id from defects) order by cast_at desc limit 300")
      .pluck()
      .all() as number[];
    for (const id of clean) w.defIns.run(id, w.lfc, Date.UTC(2027, 3, 1), w.inspector);
    const wide = screeningQuerySchema.parse({ defectType: "LFC" });
    const narrow = screeningQuerySchema.parse({ defectType: "SLG", from: "2027-02-10" });
    const fresh = scan(t.db, buildScope(t.db, narrow));
    expect(fresh.rows.length).toBeLessThan(size / 2);
    const flagged = (a: Uint8Array) => a.reduce((n, x) => n + x, 0);
    expect(flagged(fresh.affected)).toBeGreaterThan(0);
    const first = screening(t.db, narrow);
    screening(t.db, wide);
    const again = screening(t.db, narrow);
    expect(again).toEqual(first);
    // The slots as the last screening left them: its slabs and flags, nothing of the wider one's.
    const rows = scratch("screening.scope.rows", Int32Array, size, undefined, true);
    const affected = scratch("screening.scope.affected", Uint8Array, size, undefined, true);
    expect([...rows.subarray(0, fresh.rows.length)]).toEqual([...fresh.rows]);
    expect(flagged(affected)).toBe(flagged(fresh.affected));
    expect(affected).toEqual(fresh.affected);
    const term = modelTerms(t.db, fresh, ["grade_family"])[0]!;
    const grid = scratch("screening.grid.0", Int32Array, size, undefined, true);
    const own = gridOf(fresh, term)!;
    for (const i of fresh.rows) expect(grid[i]).toBe(own.keys[i]);
  });

  it("when a condition's grid keys spread wider than the pass groups by lookup, then its crude fit is the fit's own (hashed) one", () => {
    const long = crudeTheLongWay({ defectType: "SLG", adjustFor: "none" }, WIDE);
    expect(long.keySpan).toBeGreaterThan(MAX_PATTERNS);
    const row = screening(t.db, screeningQuerySchema.parse({ defectType: "SLG", adjustFor: "none" })).variables.find((r) => r.key === WIDE)!;
    expect(row.iqr).toBe(long.iqr);
    expect(row.crude).toEqual(long.crude);
    expect(row.crude!.oddsRatioPerIqr).toBeGreaterThan(0);
  });

  /**
   * The pass writes a slab's value and grid key only where a fit on its groupings reads them (each
   * pattern's first slab, and the first rows a fit checks), not for every slab: 68 MB per thread at
   * five million slabs. Where a fit reads every slab (it groups them itself), every slab's.
   */
  describe("what the pass writes", () => {
    const UNTOUCHED = -7;
    function written(key: string, everyValue: boolean, byFamily = false) {
      const sc = scan(t.db, buildScope(t.db, screeningQuerySchema.parse({ defectType: "SLG", adjustFor: "none" })));
      const size = sc.facts.size;
      // The pass's own working arrays (scratch.ts slots), marked before it runs.
      scratch("screening.values", Float64Array, size).fill(UNTOUCHED);
      scratch("screening.keys", Int32Array, size).fill(UNTOUCHED);
      const levels = byFamily ? [gridOf(sc, modelTerms(t.db, sc, ["grade_family"])[0]!)!] : null;
      const pass = numericPass(sc, key, levels, everyValue);
      const values = scratch("screening.values", Float64Array, size);
      const keys = scratch("screening.keys", Int32Array, size);
      const at: number[] = [];
      for (let i = 0; i < size; i++) if (values[i] !== UNTOUCHED) at.push(i);
      return { sc, pass, values, keys, at, truth: groupedValues(sc, key), scale: numericTerm(key, groupedValues(sc, key)).scale! };
    }

    it("when every slab's value is not needed, then only the patterns' first slabs and the first rows are written, with the grouped value and its key", () => {
      const { sc, pass, values, keys, at, truth, scale } = written("superheat_c", false);
      const reps = [...pass.grouped!.rep];
      const expected = [...new Set([...pass.withValue.subarray(0, ROWS_CHECKED), ...reps])].sort((a, b) => a - b);
      expect(at).toEqual(expected);
      expect(reps.length).toBeGreaterThan(20);
      expect(at.length).toBeLessThan(sc.rows.length / 2);
      for (const i of at) {
        expect(values[i]).toBe(truth[i]);
        expect(keys[i]).toBe(Math.round(truth[i]! * scale));
      }
      // Marked so: fitted only on the pass's grouping.
      expect(pass.term.sparse).toBe(true);
      expect(() => fitTerms(sc, [pass.term], pass.withValue, "cluster", false, true)).toThrow(/grouping/);
      expect(() => completeRows(sc, [pass.term])).toThrow(/grouping/);
      expect(fitTerms(sc, [pass.term], pass.withValue, "cluster", false, true, pass.crudeGrouping()).terms[0]!.se).toBeGreaterThan(0);
    });

    it("when the pass also groups by the grade family's levels, then the adjusted patterns' first slabs are written too", () => {
      const { pass, at, values, truth } = written("superheat_c", false, true);
      const crudeReps = new Set(pass.grouped!.rep);
      const adjustedOnly = [...pass.groupedAdjusted!.rep].filter((i) => !crudeReps.has(i) && !pass.withValue.subarray(0, ROWS_CHECKED).includes(i));
      expect(adjustedOnly.length).toBeGreaterThan(5);
      const expected = [...new Set([...pass.withValue.subarray(0, ROWS_CHECKED), ...crudeReps, ...adjustedOnly])].sort((a, b) => a - b);
      expect(at).toEqual(expected);
      for (const i of adjustedOnly) expect(values[i]).toBe(truth[i]);
    });

    it("when a fit reads every slab, then every slab in scope is written (no value: NaN)", () => {
      const { sc, pass, values, keys, at, truth, scale } = written("superheat_c", true);
      expect(pass.term.sparse).toBe(false);
      expect(at).toEqual([...sc.rows]);
      for (const i of sc.rows) {
        expect(Object.is(values[i], truth[i])).toBe(true);
        if (Number.isFinite(truth[i])) expect(keys[i]).toBe(Math.round(truth[i]! * scale));
      }
    });

    it("when the pass groups by the grade family's levels, then the crude grouping is made from that one: the same patterns, sums and pattern per slab as grouped by key alone, and the same crude fit", () => {
      const copy = (g: NonNullable<ReturnType<typeof numericPass>["grouped"]>) => ({ rep: [...g.rep], s: [...g.s], n: [...g.n], patternOf: [...g.patternOf] });
      // By key alone (its own per-slab array, in the crude slot), fitted at once: the next pass reuses no slot of it.
      const alone = written("superheat_c", false);
      expect(alone.pass.crudeAfterAdjusted).toBe(false);
      const direct = copy(alone.pass.crudeGrouping()!);
      const directFit = fitTerms(alone.sc, [alone.pass.term], alone.pass.withValue, "cluster", false, true, alone.pass.crudeGrouping());
      const { sc, pass } = written("superheat_c", false, true);
      expect(pass.crudeAfterAdjusted).toBe(true);
      // The quartiles' counts before the crude fit asks for its grouping: the adjusted one is still whole.
      expect([...pass.grouped!.rep]).toEqual(direct.rep);
      expect([...pass.grouped!.n]).toEqual(direct.n);
      const adjustedPatterns = pass.groupedAdjusted!.rep.length;
      expect(adjustedPatterns).toBeGreaterThan(direct.rep.length);
      expect(Math.max(...pass.groupedAdjusted!.patternOf)).toBe(adjustedPatterns - 1);
      const adjustedIds = [...pass.groupedAdjusted!.patternOf];
      const made = pass.crudeGrouping()!;
      expect(copy(made)).toEqual(direct);
      // The adjusted grouping's own array, now holding the crude patterns; the adjusted fit refuses it from here on.
      expect(made.patternOf).toBe(pass.groupedAdjusted!.patternOf);
      expect(adjustedIds).not.toEqual(direct.patternOf);
      expect(() => fitTerms(sc, [pass.term], pass.withValue, "cluster", false, true, pass.groupedAdjusted)).toThrow(/another length/);
      expect(fitTerms(sc, [pass.term], pass.withValue, "cluster", false, true, pass.crudeGrouping())).toEqual(directFit);
    });

    it("when a condition's keys spread wider than the pass groups by, then the pass runs again and writes every slab", () => {
      const { sc, pass, at } = written(WIDE, false);
      expect(pass.grouped).toBeUndefined();
      expect(at).toEqual([...sc.rows]);
    });
  });
});
