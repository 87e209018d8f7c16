/**
 * Issue 14, screening's one pass per condition (server/services/reports/screening.ts, numericPass):
 * besides Welch's sums it groups the slabs with a value by their grid key for the crude fit, and
 * counts them per key for the interquartile range, instead of the fit grouping them again
 * (collapseByPattern) and the quartiles counting them again. The crude odds ratio per IQR, its
 * interval and p, and the IQR must be those of the fit's own grouping and of sorted values, to the
 * last digit: checked for every condition, crude and adjusted, and for a condition whose grid keys
 * spread wider than a lookup holds (one heat's mold level fluctuation far off the scale), where the fit hashes.
 *
 * On a real SQLite file: the confounded plant of 1,000 heats × 8 slabs (tests/helpers/confounded-plant.ts).
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { screeningQuerySchema } from "@shared/api/reports";
import { VARIABLES } from "@shared/variables";
import { slabFactsChanged } from "../../server/services/report-cache";
import { completeRows, fitTerms, groupedValues, MAX_PATTERNS, numericTerm } from "../../server/services/reports/adjusted";
import { buildScope, finite, scan } from "../../server/services/reports/scope";
import { screening } from "../../server/services/reports/screening";
import { configureScreeningThreads, screeningThreadSettings } from "../../server/services/reports/screening-threads";
import { oddsRatioForStep } from "../../server/stats/logistic-multi";
import { buildConfoundedPlant } from "../helpers/confounded-plant";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
const threads = screeningThreadSettings();
/** Mold level fluctuation has two decimals (grid step 0.001 mm): 5,000 mm is 5 million steps from the rest. */
const WIDE = "mold_level_sd_mm";
const FAR = 5_000;

beforeAll(async () => {
  t = await createTestApp({ beforeStart: (db) => buildConfoundedPlant(db, { heats: 1000 }) });
  const first = "(select min(id) from heats)";
  t.db.$client.prepare(`update heats set ${WIDE} = ${FAR} where id = ${first}`).run();
  t.db.$client.prepare(`update slab_conditions set ${WIDE} = ${FAR} where heat_id = ${first}`).run();
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

/** The crude row of one condition the long way: its values, its complete slabs, the fit's own grouping. */
function crudeTheLongWay(query: Record<string, string>, key: string) {
  const q = screeningQuerySchema.parse(query);
  const sc = scan(t.db, buildScope(t.db, q));
  const values = groupedValues(sc, key);
  const term = numericTerm(key, values);
  const { rows } = completeRows(sc, [term]);
  const fit = fitTerms(sc, [term], rows, q.se, false, true);
  const iqr = iqrOfSorted(values, rows);
  const c = fit.terms[0]!;
  // As screening words it: no odds ratio per IQR where the fit has no slope or the IQR is 0.
  const or = c.coef === null || c.se === null || !(iqr > 0) ? null : oddsRatioForStep(c.coef, c.se, iqr);
  return {
    iqr,
    crude: or
      ? { oddsRatioPerIqr: finite(or.oddsRatio ?? NaN), ciLower: finite(or.ciLower ?? NaN), ciUpper: finite(or.ciUpper ?? NaN), p: finite(c.p ?? NaN) }
      : { oddsRatioPerIqr: null, ciLower: null, ciUpper: null, p: c.p ?? null },
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
    ["with model-based SEs", { defectType: "SLG", adjustFor: "none", se: "model" }],
  ] as const) {
    it(`when a screening is ${name}, then every condition's IQR and crude odds ratio per IQR equal the fit's own grouping and sorted quartiles, digit for digit`, () => {
      const out = screening(t.db, screeningQuerySchema.parse(query));
      let compared = 0;
      for (const v of VARIABLES) {
        const row = out.variables.find((r) => r.key === v.key)!;
        if (!row.testable) continue;
        const long = crudeTheLongWay(query, v.key);
        expect({ key: v.key, iqr: row.iqr, crude: row.crude }).toEqual({ key: v.key, iqr: long.iqr, crude: long.crude });
        compared++;
      }
      expect(compared).toBeGreaterThanOrEqual(10);
      const wide = out.variables.find((r) => r.key === WIDE)!;
      expect(wide.crude?.oddsRatioPerIqr).toBeGreaterThan(0);
    });
  }

  it("when a condition's grid keys spread wider than the pass groups by lookup, then its crude fit is the fit's own (hashed) one", () => {
    const long = crudeTheLongWay({ defectType: "SLG", adjustFor: "none" }, WIDE);
    expect(long.keySpan).toBeGreaterThan(MAX_PATTERNS);
    const row = screening(t.db, screeningQuerySchema.parse({ defectType: "SLG", adjustFor: "none" })).variables.find((r) => r.key === WIDE)!;
    expect(row.iqr).toBe(long.iqr);
    expect(row.crude).toEqual(long.crude);
    expect(row.crude!.oddsRatioPerIqr).toBeGreaterThan(0);
  });
});
