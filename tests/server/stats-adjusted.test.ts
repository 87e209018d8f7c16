import { describe, expect, it } from "vitest";
import * as ss from "simple-statistics";
import { fisherExact2x2 } from "../../server/stats/contingency";
import { chiSquareUpper, normalQuantileOf, normalUpper as normalUpperOf, tTwoSided } from "../../server/stats/distributions";
import { logisticRegression } from "../../server/stats/logistic";
import {
  changeInEstimate,
  logisticRegressionColumns,
  logisticRegressionMulti,
  oddsRatioForStep,
  type SlabRow,
  type TermSpec,
} from "../../server/stats/logistic-multi";
import { breslowDay, expectedUnderCommonOddsRatio, mantelHaenszel, stratumOddsRatio, type Stratum2x2 } from "../../server/stats/stratified";
import { differenceOfStandardisedRates, directlyStandardisedRate, pooledMix } from "../../server/stats/standardise";
import { laneyPChart, pChart, pChartWithBaseline, uChartWithBaseline, westernElectricRules } from "../../server/stats/control";
import { RunningSpread, spreadOf, spreadOfGroups } from "../../server/stats/spread";
import { correlationsWithOutcome, spearman } from "../../server/stats/spearman";
import { groupsFrom } from "../../server/stats/ranks";
import { mannWhitney } from "../../server/stats/mann-whitney";

/** Gauss–Jordan inverse with partial pivoting: an independent route to check our Cholesky-based results. */
function gaussJordanInverse(m: number[][]): number[][] {
  const k = m.length;
  const a = m.map((row, i) => [...row, ...Array.from({ length: k }, (_, j) => (i === j ? 1 : 0))]);
  for (let c = 0; c < k; c++) {
    let piv = c;
    for (let r = c + 1; r < k; r++) if (Math.abs(a[r]![c]!) > Math.abs(a[piv]![c]!)) piv = r;
    [a[c], a[piv]] = [a[piv]!, a[c]!];
    const d = a[c]![c]!;
    for (let j = 0; j < 2 * k; j++) a[c]![j]! /= d;
    for (let r = 0; r < k; r++) {
      if (r === c) continue;
      const f = a[r]![c]!;
      for (let j = 0; j < 2 * k; j++) a[r]![j]! -= f * a[c]![j]!;
    }
  }
  return a.map((row) => row.slice(k));
}

/** Determinant by Gaussian elimination (for the GVIF check). */
function determinant(m: number[][]): number {
  const a = m.map((r) => [...r]);
  const k = a.length;
  let det = 1;
  for (let c = 0; c < k; c++) {
    let piv = c;
    for (let r = c + 1; r < k; r++) if (Math.abs(a[r]![c]!) > Math.abs(a[piv]![c]!)) piv = r;
    if (piv !== c) {
      [a[c], a[piv]] = [a[piv]!, a[c]!];
      det = -det;
    }
    det *= a[c]![c]!;
    for (let r = c + 1; r < k; r++) {
      const f = a[r]![c]! / a[c]![c]!;
      for (let j = c; j < k; j++) a[r]![j]! -= f * a[c]![j]!;
    }
  }
  return det;
}

const z975 = normalQuantileOf(0.975);

describe("stratified 2×2 analysis: UC Berkeley admissions by department", () => {
  // Bickel, Hammel & O'Connell 1975 (Science 187:398), as R's UCBAdmissions dataset (Admit × Gender ×
  // Dept) and Agresti, Categorical Data Analysis. Per department [[admitted men, rejected men],
  // [admitted women, rejected women]], so the odds ratio is men's odds of admission over women's.
  const ucb: Stratum2x2[] = [
    { label: "A", a: 512, b: 313, c: 89, d: 19 },
    { label: "B", a: 353, b: 207, c: 17, d: 8 },
    { label: "C", a: 120, b: 205, c: 202, d: 391 },
    { label: "D", a: 138, b: 279, c: 131, d: 244 },
    { label: "E", a: 53, b: 138, c: 94, d: 299 },
    { label: "F", a: 22, b: 351, c: 24, d: 317 },
  ];

  it("when the counts are summed, then they give the published totals (4526 applicants, 1755 admitted)", () => {
    const total = ucb.reduce((t, s) => t + s.a + s.b + s.c + s.d, 0);
    expect(total).toBe(4526);
    expect(ucb.reduce((t, s) => t + s.a + s.c, 0)).toBe(1755);
    expect(ucb.reduce((t, s) => t + s.a + s.b, 0)).toBe(2691); // men
  });

  it("when pooled by Mantel–Haenszel, then the common odds ratio is 0.9047 (0.7719–1.0603) as R's mantelhaen.test(UCBAdmissions) gives", () => {
    // R's documented example mantelhaen.test(UCBAdmissions): common odds ratio 0.9046968, 95 % CI
    // 0.7719074 to 1.0603298 (recalled; re-run with R 4.2.2 and statsmodels 0.13.5 StratifiedTable on
    // this machine, which print the same to 10 digits). Verified below by hand from the table.
    const mh = mantelHaenszel(ucb);
    expect(mh.oddsRatio).toBeCloseTo(0.9046968, 7);
    expect(mh.ciLower).toBeCloseTo(0.7719074, 7);
    expect(mh.ciUpper).toBeCloseTo(1.0603298, 7);
    expect(mh.informativeStrata).toBe(6);
    // By hand: R = Σ ad/n, S = Σ bc/n, and the Robins–Breslow–Greenland variance written out.
    let R = 0,
      S = 0,
      v1 = 0,
      v2 = 0,
      v3 = 0;
    for (const { a, b, c, d } of ucb) {
      const n = a + b + c + d;
      const [P, Q, r, s] = [(a + d) / n, (b + c) / n, (a * d) / n, (b * c) / n];
      R += r;
      S += s;
      v1 += P * r;
      v2 += P * s + Q * r;
      v3 += Q * s;
    }
    const se = Math.sqrt(v1 / (2 * R ** 2) + v2 / (2 * R * S) + v3 / (2 * S ** 2));
    expect(mh.oddsRatio).toBeCloseTo(R / S, 12);
    expect(mh.logOddsRatioSe).toBeCloseTo(se, 12);
    expect(mh.ciLower).toBeCloseTo((R / S) * Math.exp(-z975 * se), 12);
    expect(mh.method).toContain("Robins–Breslow–Greenland");
  });

  it("when the crude table is collapsed over departments, then men look favoured (OR 1.84) although within departments they are not", () => {
    // Crude: 1198 of 2691 men and 557 of 1835 women admitted (Bickel et al. 1975); by hand.
    const mh = mantelHaenszel(ucb);
    expect(mh.crudeOddsRatio).toBeCloseTo((1198 * 1278) / (1493 * 557), 12);
    expect(mh.crudeOddsRatio).toBeCloseTo(1.841, 3);
    expect(changeInEstimate(mh.crudeOddsRatio, mh.oddsRatio).differs).toBe(true);
  });

  it("when the Cochran–Mantel–Haenszel test is run, then X² = 1.4269 (p 0.2323) with R's default continuity correction and 1.5246 (p 0.2169) without", () => {
    // R 4.2.2, mantelhaen.test(UCBAdmissions) and (…, correct = FALSE), run on this machine; the same
    // from statsmodels 0.13.5 StratifiedTable.test_null_odds(correction = True/False).
    const corrected = mantelHaenszel(ucb);
    const plain = mantelHaenszel(ucb, { continuityCorrection: false });
    expect(corrected.cmh.statistic).toBeCloseTo(1.4269462, 6);
    expect(corrected.cmh.p).toBeCloseTo(0.2322635, 6);
    expect(corrected.cmh.continuityCorrection).toBe(true);
    expect(plain.cmh.statistic).toBeCloseTo(1.5246067, 6);
    expect(plain.cmh.p).toBeCloseTo(0.2169237, 6);
    expect(corrected.method).toContain("with continuity correction");
    // By hand: Σa − ΣE(a) and Σ Var(a) from the hypergeometric moments.
    let delta = 0,
      v = 0;
    for (const { a, b, c, d } of ucb) {
      const n = a + b + c + d;
      delta += a - ((a + b) * (a + c)) / n;
      v += ((a + b) * (c + d) * (a + c) * (b + d)) / (n * n * (n - 1));
    }
    expect(plain.cmh.statistic).toBeCloseTo(delta ** 2 / v, 10);
    expect(corrected.cmh.statistic).toBeCloseTo((Math.abs(delta) - 0.5) ** 2 / v, 10);
  });

  it("when homogeneity is tested, then Breslow–Day gives 18.83 on 5 df (p 0.0021): the departments differ", () => {
    // Agresti, Categorical Data Analysis, reports Breslow–Day 18.8 (df 5) for these data (recalled).
    // statsmodels 0.13.5 test_equal_odds on this machine: 18.825514 without and 18.825501 with Tarone's
    // adjustment. Verified below by solving each stratum's expected count by bisection.
    const mh = mantelHaenszel(ucb);
    const bd = mh.breslowDay;
    expect(bd.df).toBe(5);
    expect(bd.tarone).toBe(true);
    expect(bd.statistic).toBeCloseTo(18.825501, 5);
    expect(bd.uncorrected).toBeCloseTo(18.825514, 5);
    expect(bd.p).toBeCloseTo(0.0020714, 6);
    const psi = mh.oddsRatio!;
    let x2 = 0,
      sa = 0,
      se = 0,
      sv = 0;
    for (const s of ucb) {
      const n1 = s.a + s.b,
        m1 = s.a + s.c,
        n2 = s.c + s.d;
      let lo = Math.max(0, m1 - n2),
        hi = Math.min(n1, m1);
      for (let i = 0; i < 200; i++) {
        const A = (lo + hi) / 2;
        // the odds ratio of the fitted table increases with A
        if ((A * (n2 - m1 + A)) / ((n1 - A) * (m1 - A)) < psi) lo = A;
        else hi = A;
      }
      const A = (lo + hi) / 2;
      expect(expectedUnderCommonOddsRatio(s, psi)).toBeCloseTo(A, 8);
      const v = 1 / (1 / A + 1 / (n1 - A) + 1 / (m1 - A) + 1 / (n2 - m1 + A));
      x2 += (s.a - A) ** 2 / v;
      sa += s.a;
      se += A;
      sv += v;
    }
    expect(bd.uncorrected).toBeCloseTo(x2, 8);
    expect(bd.statistic).toBeCloseTo(x2 - (sa - se) ** 2 / sv, 8);
    expect(breslowDay(ucb, psi, false).statistic).toBeCloseTo(x2, 8);
  });

  it("when each department is shown, then its odds ratio has Woolf's logit interval (department A: 0.349, 0.209–0.584)", () => {
    // By hand from the table: 512·19 / (313·89), interval exp(ln OR ± 1.96 √(1/512 + 1/313 + 1/89 + 1/19)).
    const a = stratumOddsRatio(ucb[0]!);
    const or = (512 * 19) / (313 * 89);
    const se = Math.sqrt(1 / 512 + 1 / 313 + 1 / 89 + 1 / 19);
    expect(a.oddsRatio).toBeCloseTo(or, 12);
    expect(a.oddsRatio).toBeCloseTo(0.349, 3);
    expect(a.ciLower).toBeCloseTo(or * Math.exp(-z975 * se), 12);
    expect(a.ciUpper).toBeCloseTo(or * Math.exp(z975 * se), 12);
    expect(a.ciLower).toBeCloseTo(0.209, 3);
    expect(a.ciUpper).toBeCloseTo(0.584, 3);
    expect(a.zeroCellCorrection).toBe(false);
  });
});

describe("stratified 2×2 analysis: empty cells and strata", () => {
  it("when a stratum has a zero cell, then 0.5 is added to each of its cells (Haldane–Anscombe) and the interval stays finite", () => {
    const r = stratumOddsRatio({ label: "S", a: 0, b: 10, c: 5, d: 20 });
    expect(r.zeroCellCorrection).toBe(true);
    expect(r.oddsRatio).toBeCloseTo((0.5 * 20.5) / (10.5 * 5.5), 12);
    expect(r.ciUpper).toBeCloseTo(r.oddsRatio! * Math.exp(z975 * Math.sqrt(1 / 0.5 + 1 / 10.5 + 1 / 5.5 + 1 / 20.5)), 12);
    expect(r.reason).toContain("0.5");
  });

  it("when one group is missing from a stratum, then that stratum has no odds ratio and adds nothing to the pooled one", () => {
    const strata: Stratum2x2[] = [
      { label: "F1", a: 10, b: 90, c: 20, d: 80 },
      { label: "F2", a: 5, b: 45, c: 0, d: 0 },
      { label: "F3", a: 8, b: 42, c: 12, d: 38 },
    ];
    const mh = mantelHaenszel(strata);
    expect(mh.strata[1]!.oddsRatio).toBeNull();
    expect(mh.strata[1]!.reason).toContain("second group has no slabs");
    expect(mh.informativeStrata).toBe(2);
    const without = mantelHaenszel([strata[0]!, strata[2]!]);
    expect(mh.oddsRatio).toBeCloseTo(without.oddsRatio!, 12);
    expect(mh.cmh.statistic).toBeCloseTo(without.cmh.statistic!, 12);
    expect(mh.breslowDay.df).toBe(1);
    expect(mh.notes.join(" ")).toContain("1 stratum without both groups or both outcomes adds nothing");
  });

  it("when only one stratum carries information, then the pooled odds ratio is that stratum's and Breslow–Day is null with a reason", () => {
    const mh = mantelHaenszel([{ label: "F1", a: 10, b: 90, c: 20, d: 80 }]);
    expect(mh.oddsRatio).toBeCloseTo((10 * 80) / (90 * 20), 12);
    expect(mh.breslowDay.statistic).toBeNull();
    expect(mh.breslowDay.p).toBeNull();
    expect(mh.breslowDay.reason).toContain("only one stratum");
  });

  it("when no stratum has affected slabs in the first group, then the common odds ratio is null (not 0) with a reason", () => {
    const mh = mantelHaenszel([
      { label: "F1", a: 0, b: 50, c: 4, d: 46 },
      { label: "F2", a: 0, b: 30, c: 2, d: 28 },
    ]);
    expect(mh.oddsRatio).toBeNull();
    expect(mh.ciLower).toBeNull();
    expect(mh.reason).toContain("is zero");
    // The CMH test is still defined: the margins vary.
    expect(mh.cmh.statistic).not.toBeNull();
  });

  it("when there are no slabs at all, then every statistic is null with a reason", () => {
    const mh = mantelHaenszel([]);
    expect(mh.oddsRatio).toBeNull();
    expect(mh.cmh.statistic).toBeNull();
    expect(mh.cmh.reason).toBeTruthy();
    expect(mh.breslowDay.reason).toBeTruthy();
  });
});

describe("multivariable logistic regression: the UCLA admissions example (admit ~ gre + gpa + rank)", () => {
  // UCLA IDRE statistical consulting, "Logit regression | R data analysis examples": 400 applicants,
  // admit (0/1), gre, gpa and rank of the undergraduate institution (1–4, a factor with 1 as the
  // reference). Rows pinned here as "admit gre gpa rank"; they give the page's table of admit by rank
  // (admitted 33, 54, 28, 12) and means (gre 587.7, gpa 3.3899).
  const csv = [
    "0 380 3.61 3,1 660 3.67 3,1 800 4 1,1 640 3.19 4,0 520 2.93 4,1 760 3 2,1 560 2.98 1,0 400 3.08 2,1 540 3.39 3,0 700 3.92 2,0 800 4 4,0 440 3.22 1",
    "1 760 4 1,0 700 3.08 2,1 700 4 1,0 480 3.44 3,0 780 3.87 4,0 360 2.56 3,0 800 3.75 2,1 540 3.81 1,0 500 3.17 3,1 660 3.63 2,0 600 2.82 4,0 680 3.19 4",
    "1 760 3.35 2,1 800 3.66 1,1 620 3.61 1,1 520 3.74 4,1 780 3.22 2,0 520 3.29 1,0 540 3.78 4,0 760 3.35 3,0 600 3.4 3,1 800 4 3,0 360 3.14 1,0 400 3.05 2",
    "0 580 3.25 1,0 520 2.9 3,1 500 3.13 2,1 520 2.68 3,0 560 2.42 2,1 580 3.32 2,1 600 3.15 2,0 500 3.31 3,0 700 2.94 2,1 460 3.45 3,1 580 3.46 2,0 500 2.97 4",
    "0 440 2.48 4,0 400 3.35 3,0 640 3.86 3,0 440 3.13 4,0 740 3.37 4,1 680 3.27 2,0 660 3.34 3,1 740 4 3,0 560 3.19 3,0 380 2.94 3,0 400 3.65 2,0 600 2.82 4",
    "1 620 3.18 2,0 560 3.32 4,0 640 3.67 3,1 680 3.85 3,0 580 4 3,0 600 3.59 2,0 740 3.62 4,0 620 3.3 1,0 580 3.69 1,0 800 3.73 1,0 640 4 3,0 300 2.92 4",
    "0 480 3.39 4,0 580 4 2,0 720 3.45 4,0 720 4 3,0 560 3.36 3,1 800 4 3,0 540 3.12 1,1 620 4 1,0 700 2.9 4,0 620 3.07 2,0 500 2.71 2,0 380 2.91 4",
    "1 500 3.6 3,0 520 2.98 2,0 600 3.32 2,0 600 3.48 2,0 700 3.28 1,1 660 4 2,0 700 3.83 2,1 720 3.64 1,0 800 3.9 2,0 580 2.93 2,1 660 3.44 2,0 660 3.33 2",
    "0 640 3.52 4,0 480 3.57 2,0 700 2.88 2,0 400 3.31 3,0 340 3.15 3,0 580 3.57 3,0 380 3.33 4,0 540 3.94 3,1 660 3.95 2,1 740 2.97 2,1 700 3.56 1,0 480 3.13 2",
    "0 400 2.93 3,0 480 3.45 2,0 680 3.08 4,0 420 3.41 4,0 360 3 3,0 600 3.22 1,0 720 3.84 3,0 620 3.99 3,1 440 3.45 2,0 700 3.72 2,1 800 3.7 1,0 340 2.92 3",
    "1 520 3.74 2,1 480 2.67 2,0 520 2.85 3,0 500 2.98 3,0 720 3.88 3,0 540 3.38 4,1 600 3.54 1,0 740 3.74 4,0 540 3.19 2,0 460 3.15 4,1 620 3.17 2,0 640 2.79 2",
    "0 580 3.4 2,0 500 3.08 3,0 560 2.95 2,0 500 3.57 3,0 560 3.33 4,0 700 4 3,0 620 3.4 2,1 600 3.58 1,0 640 3.93 2,1 700 3.52 4,0 620 3.94 4,0 580 3.4 3",
    "0 580 3.4 4,0 380 3.43 3,0 480 3.4 2,0 560 2.71 3,1 480 2.91 1,0 740 3.31 1,1 800 3.74 1,0 400 3.38 2,1 640 3.94 2,0 580 3.46 3,0 620 3.69 3,1 580 2.86 4",
    "0 560 2.52 2,1 480 3.58 1,0 660 3.49 2,0 700 3.82 3,0 600 3.13 2,0 640 3.5 2,1 700 3.56 2,0 520 2.73 2,0 580 3.3 2,0 700 4 1,0 440 3.24 4,0 720 3.77 3",
    "0 500 4 3,0 600 3.62 3,0 400 3.51 3,0 540 2.81 3,0 680 3.48 3,1 800 3.43 2,0 500 3.53 4,1 620 3.37 2,0 520 2.62 2,1 620 3.23 3,0 620 3.33 3,0 300 3.01 3",
    "0 620 3.78 3,0 500 3.88 4,0 700 4 2,1 540 3.84 2,0 500 2.79 4,0 800 3.6 2,0 560 3.61 3,0 580 2.88 2,0 560 3.07 2,0 500 3.35 2,1 640 2.94 2,0 800 3.54 3",
    "0 640 3.76 3,0 380 3.59 4,1 600 3.47 2,0 560 3.59 2,0 660 3.07 3,1 400 3.23 4,0 600 3.63 3,0 580 3.77 4,0 800 3.31 3,1 580 3.2 2,1 700 4 1,0 420 3.92 4",
    "1 600 3.89 1,1 780 3.8 3,0 740 3.54 1,1 640 3.63 1,0 540 3.16 3,0 580 3.5 2,0 740 3.34 4,0 580 3.02 2,0 460 2.87 2,0 640 3.38 3,1 600 3.56 2,1 660 2.91 3",
    "0 340 2.9 1,1 460 3.64 1,0 460 2.98 1,1 560 3.59 2,0 540 3.28 3,0 680 3.99 3,1 480 3.02 1,0 800 3.47 3,0 800 2.9 2,1 720 3.5 3,0 620 3.58 2,0 540 3.02 4",
    "0 480 3.43 2,1 720 3.42 2,0 580 3.29 4,0 600 3.28 3,0 380 3.38 2,0 420 2.67 3,1 800 3.53 1,0 620 3.05 2,1 660 3.49 2,0 480 4 2,0 500 2.86 4,0 700 3.45 3",
    "0 440 2.76 2,1 520 3.81 1,1 680 2.96 3,0 620 3.22 2,0 540 3.04 1,0 800 3.91 3,0 680 3.34 2,0 440 3.17 2,0 680 3.64 3,0 640 3.73 3,0 660 3.31 4,0 620 3.21 4",
    "1 520 4 2,1 540 3.55 4,1 740 3.52 4,0 640 3.35 3,1 520 3.3 2,1 620 3.95 3,0 520 3.51 2,0 640 3.81 2,0 680 3.11 2,0 440 3.15 2,1 520 3.19 3,1 620 3.95 3",
    "1 520 3.9 3,0 380 3.34 3,0 560 3.24 4,1 600 3.64 3,1 680 3.46 2,0 500 2.81 3,1 640 3.95 2,0 540 3.33 3,1 680 3.67 2,0 660 3.32 1,0 520 3.12 2,1 600 2.98 2",
    "0 460 3.77 3,1 580 3.58 1,1 680 3 4,1 660 3.14 2,0 660 3.94 2,0 360 3.27 3,0 660 3.45 4,0 520 3.1 4,1 440 3.39 2,0 600 3.31 4,1 800 3.22 1,1 660 3.7 4",
    "0 800 3.15 4,0 420 2.26 4,1 620 3.45 2,0 800 2.78 2,0 680 3.7 2,0 800 3.97 1,0 480 2.55 1,0 520 3.25 3,0 560 3.16 1,0 460 3.07 2,0 540 3.5 2,0 720 3.4 3",
    "0 640 3.3 2,1 660 3.6 3,1 400 3.15 2,1 680 3.98 2,0 220 2.83 3,0 580 3.46 4,1 540 3.17 1,0 580 3.51 2,0 540 3.13 2,0 440 2.98 3,0 560 4 3,0 660 3.67 2",
    "0 660 3.77 3,1 520 3.65 4,0 540 3.46 4,1 300 2.84 2,1 340 3 2,1 780 3.63 4,1 480 3.71 4,0 540 3.28 1,0 460 3.14 3,0 460 3.58 2,0 500 3.01 4,0 420 2.69 2",
    "0 520 2.7 3,0 680 3.9 1,0 680 3.31 2,1 560 3.48 2,0 580 3.34 2,0 500 2.93 4,0 740 4 3,0 660 3.59 3,0 420 2.96 1,0 560 3.43 3,1 460 3.64 3,1 620 3.71 1",
    "0 520 3.15 3,0 620 3.09 4,0 540 3.2 1,1 660 3.47 3,0 500 3.23 4,1 560 2.65 3,0 500 3.95 4,0 580 3.06 2,0 520 3.35 3,0 500 3.03 3,0 600 3.35 2,0 580 3.8 2",
    "0 400 3.36 2,0 620 2.85 2,1 780 4 2,0 620 3.43 3,1 580 3.12 3,0 700 3.52 2,1 540 3.78 2,1 760 2.81 1,0 700 3.27 2,0 720 3.31 1,1 560 3.69 3,0 720 3.94 3",
    "1 520 4 1,1 540 3.49 1,0 680 3.14 2,0 460 3.44 2,1 560 3.36 1,0 480 2.78 3,0 460 2.93 3,0 620 3.63 3,0 580 4 1,0 800 3.89 2,1 540 3.77 2,1 680 3.76 3",
    "1 680 2.42 1,1 620 3.37 1,0 560 3.78 2,0 560 3.49 4,0 620 3.63 2,1 800 4 2,0 640 3.12 3,0 540 2.7 2,0 700 3.65 2,1 540 3.49 2,0 540 3.51 2,0 660 4 1",
    "1 480 2.62 2,0 420 3.02 1,1 740 3.86 2,0 580 3.36 2,0 640 3.17 2,0 640 3.51 2,1 800 3.05 2,1 660 3.88 2,1 600 3.38 3,1 620 3.75 2,1 460 3.99 3,0 620 4 2",
    "0 560 3.04 3,0 460 2.63 2,0 700 3.65 2,0 600 3.89 3",
  ].join(",");
  const data = csv.split(",").map((r) => r.split(" ").map(Number) as [number, number, number, number]);
  const terms: TermSpec[] = [
    { name: "gre", kind: "numeric" },
    { name: "gpa", kind: "numeric" },
    { name: "rank", kind: "categorical" },
  ];
  const rows: SlabRow[] = data.map(([admit, gre, gpa, rank], i) => ({
    values: [gre, gpa, String(rank)],
    successes: admit,
    trials: 1,
    cluster: Math.ceil((i + 1) / 5),
  }));
  // The page's glm output (recalled; re-run with R 4.2.2 glm and statsmodels 0.13.5 GLM on this
  // machine, which agree with it and with each other to 10 digits). Verified below: the score is zero
  // and the standard errors come back from an information matrix built and inverted in this test.
  const published = [
    { column: "(intercept)", coef: -3.989979, se: 1.139951, p: 0.000465 },
    { column: "gre", coef: 0.002264, se: 0.001094, p: 0.038465 },
    { column: "gpa", coef: 0.804038, se: 0.331819, p: 0.015388 },
    { column: "rank = 2", coef: -0.675443, se: 0.31649, p: 0.032829 },
    { column: "rank = 3", coef: -1.340204, se: 0.345306, p: 0.000104 },
    { column: "rank = 4", coef: -1.551464, se: 0.417832, p: 0.000205 },
  ];
  const design = data.map(([, gre, gpa, rank]) => [1, gre, gpa, rank === 2 ? 1 : 0, rank === 3 ? 1 : 0, rank === 4 ? 1 : 0]);

  it("when the rows are pinned, then they give the page's counts and means", () => {
    expect(data).toHaveLength(400);
    expect([1, 2, 3, 4].map((k) => data.filter((r) => r[3] === k && r[0] === 1).length)).toEqual([33, 54, 28, 12]);
    expect(ss.mean(data.map((r) => r[1]))).toBeCloseTo(587.7, 10);
    expect(ss.mean(data.map((r) => r[2]))).toBeCloseTo(3.3899, 10);
  });

  it("when fitted with model-based SEs, then the published coefficients, SEs and Wald p-values come back", () => {
    const fit = logisticRegressionMulti(terms, rows, { se: "model" });
    expect(fit.converged).toBe(true);
    expect(fit.reason).toBeNull();
    const got = [{ column: "(intercept)", ...fit.intercept }, ...fit.terms];
    published.forEach((pub, i) => {
      expect(got[i]!.column).toBe(pub.column);
      expect(got[i]!.coef).toBeCloseTo(pub.coef, 6);
      expect(got[i]!.se).toBeCloseTo(pub.se, 6);
      expect(got[i]!.p).toBeCloseTo(pub.p, 6);
    });
    expect(fit.terms[2]!.reference).toBe("1");
    expect(fit.terms[2]!.oddsRatio).toBeCloseTo(Math.exp(-0.675443), 6);
    expect(fit.terms[2]!.ciLower).toBeCloseTo(Math.exp(fit.terms[2]!.coef! - z975 * fit.terms[2]!.se!), 12);
    expect(fit.seMethod).toBe("model");
    expect(fit.method).toContain("model-based");
    expect(fit.slabs).toBe(400);
    expect(fit.affected).toBe(127);
  });

  it("when the published coefficients are checked independently, then the score is zero there and the information gives the published SEs", () => {
    const b = published.map((x) => x.coef);
    const grad = new Array<number>(6).fill(0);
    const info = Array.from({ length: 6 }, () => new Array<number>(6).fill(0));
    design.forEach((x, i) => {
      const p = 1 / (1 + Math.exp(-x.reduce((t, v, j) => t + v * b[j]!, 0)));
      x.forEach((xa, a) => {
        grad[a]! += xa * (data[i]![0] - p);
        x.forEach((xb, c) => (info[a]![c]! += p * (1 - p) * xa * xb));
      });
    });
    // Six-digit coefficients: the score is zero to the rounding of the published digits.
    grad.forEach((g, a) => expect(Math.abs(g) / Math.sqrt(info[a]![a]!)).toBeLessThan(0.01));
    const cov = gaussJordanInverse(info);
    // At coefficients rounded to six decimals (gre's to 4e-7, i.e. 3e-4 on the logit at gre 800) the
    // information agrees with the published SEs to about 1 part in 10⁴.
    published.forEach((pub, a) => expect(Math.sqrt(cov[a]![a]!) / pub.se).toBeCloseTo(1, 3));
    // Wald test of rank (3 df) from this independent covariance; the page reports X² = 20.9, df 3,
    // p = 0.00011 (recalled).
    const fit = logisticRegressionMulti(terms, rows, { se: "model" });
    const idx = [3, 4, 5];
    const inv = gaussJordanInverse(idx.map((r) => idx.map((c) => cov[r]![c]!)));
    const w = idx.reduce((t, r, i) => t + idx.reduce((u, c, j) => u + b[r]! * inv[i]![j]! * b[c]!, 0), 0);
    const rank = fit.variables.find((v) => v.variable === "rank")!;
    expect(rank.waldChi2).toBeCloseTo(w, 2);
    expect(rank.waldChi2).toBeCloseTo(20.9, 1);
    expect(rank.df).toBe(3);
    expect(rank.waldP).toBeCloseTo(0.00011, 5);
  });

  it("when the fit is summarised, then deviance 458.52, null deviance 499.98 and AIC 470.52 as the page prints", () => {
    // Recalled from the page; verified: −2 log-likelihood at the published coefficients, by hand.
    const fit = logisticRegressionMulti(terms, rows, { se: "model" });
    const b = published.map((x) => x.coef);
    const dev =
      -2 *
      design.reduce((t, x, i) => {
        const p = 1 / (1 + Math.exp(-x.reduce((s, v, j) => s + v * b[j]!, 0)));
        return t + (data[i]![0] ? Math.log(p) : Math.log(1 - p));
      }, 0);
    expect(fit.deviance).toBeCloseTo(dev, 3);
    expect(fit.deviance).toBeCloseTo(458.52, 2);
    expect(fit.nullDeviance).toBeCloseTo(-2 * (127 * Math.log(127 / 400) + 273 * Math.log(273 / 400)), 10);
    expect(fit.nullDeviance).toBeCloseTo(499.98, 2);
    expect(fit.aic).toBeCloseTo(458.5174925 + 12, 6);
  });

  it("when each variable is dropped in turn, then the likelihood-ratio tests are those of R's drop1 (gre 4.358, gpa 6.014, rank 21.826 on 3 df)", () => {
    // R 4.2.2 drop1(glm, test = "LRT") on this machine: gre 4.357759, gpa 6.014295, rank 21.826489
    // (p 7.0885e-05). Verified: the deviance differences of reduced models fitted by the separate
    // single-model routine (logisticRegression), whose deviance for 0/1 rows is −2 log L.
    const fit = logisticRegressionMulti(terms, rows, { se: "model" });
    const lr = Object.fromEntries(fit.variables.map((v) => [v.variable, v]));
    expect(lr.gre!.lrChi2).toBeCloseTo(4.357759, 5);
    expect(lr.gpa!.lrChi2).toBeCloseTo(6.014295, 5);
    expect(lr.rank!.lrChi2).toBeCloseTo(21.826489, 5);
    expect(lr.rank!.lrP).toBeCloseTo(7.0885e-5, 8);
    const dev = (cols: number[]) => logisticRegression(design.map((x, i) => ({ x: cols.map((c) => x[c]!), successes: data[i]![0], trials: 1 }))).deviance;
    const full = dev([1, 2, 3, 4, 5]);
    expect(lr.gre!.lrChi2).toBeCloseTo(dev([2, 3, 4, 5]) - full, 6);
    expect(lr.rank!.lrChi2).toBeCloseTo(dev([1, 2]) - full, 6);
    expect(lr.rank!.lrP).toBeCloseTo(chiSquareUpper(dev([1, 2]) - full, 3), 10);
  });

  it("when the rows come grouped (slabs with equal values counted together), then the fit is the same", () => {
    const groups = new Map<string, SlabRow>();
    for (const r of rows) {
      const key = r.values.join("|");
      const g = groups.get(key) ?? { values: r.values, successes: 0, trials: 0 };
      g.successes += r.successes;
      g.trials += 1;
      groups.set(key, g);
    }
    expect(groups.size).toBeLessThan(400);
    const a = logisticRegressionMulti(terms, rows, { se: "model" });
    const g = logisticRegressionMulti(terms, [...groups.values()], { se: "model" });
    a.terms.forEach((t, i) => {
      expect(g.terms[i]!.coef).toBeCloseTo(t.coef!, 9);
      expect(g.terms[i]!.se).toBeCloseTo(t.se!, 9);
    });
    expect(g.deviance).toBeCloseTo(a.deviance!, 8);
    expect(g.variables[2]!.lrChi2).toBeCloseTo(a.variables[2]!.lrChi2!, 8);
  });

  it("when another reference level is chosen, then the odds ratios are re-expressed against it", () => {
    const fit = logisticRegressionMulti([terms[0]!, terms[1]!, { name: "rank", kind: "categorical", reference: "4" }], rows, { se: "model" });
    const r1 = fit.terms.find((t) => t.column === "rank = 1")!;
    expect(r1.reference).toBe("4");
    expect(r1.coef).toBeCloseTo(1.551464, 5);
    expect(fit.deviance).toBeCloseTo(458.5174925, 6);
  });

  it("when the same data come as columns (codes and a label), then the result is the same", () => {
    const fit = logisticRegressionColumns({
      terms: [
        { name: "gre", kind: "numeric", values: Float64Array.from(data, (r) => r[1]) },
        { name: "gpa", kind: "numeric", values: Float64Array.from(data, (r) => r[2]) },
        { name: "rank", kind: "categorical", codes: Int32Array.from(data, (r) => r[3]), label: (c) => String(c) },
      ],
      affected: Uint8Array.from(data, (r) => r[0]),
    });
    expect(fit.seMethod).toBe("model");
    expect(fit.terms[4]!.coef).toBeCloseTo(-1.551464, 5);
  });

  it("when the variance inflation factors are computed, then they equal 1/(1 − R²) of each term on the others and the GVIF of rank its determinant ratio", () => {
    // Fox & Monette 1992 (JASA 87:178): GVIF = det R₁₁ · det R₂₂ / det R on the correlation matrix of
    // the design columns. Independent check: R² of gre on the other columns by least squares solved
    // with Gauss–Jordan, and determinants by elimination.
    const fit = logisticRegressionMulti(terms, rows, { se: "model" });
    const X = design.map((r) => r.slice(1));
    const k = 5;
    const mean = Array.from({ length: k }, (_, j) => ss.mean(X.map((r) => r[j]!)));
    const C = Array.from({ length: k }, (_, a) => Array.from({ length: k }, (_, b) => X.reduce((t, r) => t + (r[a]! - mean[a]!) * (r[b]! - mean[b]!), 0)));
    const corr = C.map((row, a) => row.map((v, b) => v / Math.sqrt(C[a]![a]! * C[b]![b]!)));
    // R² of gre on gpa + rank dummies: 1 − SSE/SST with the normal equations of the centred columns.
    const others = [1, 2, 3, 4];
    const beta = gaussJordanInverse(others.map((a) => others.map((b) => C[a]![b]!))).map((row) => row.reduce((t, v, j) => t + v * C[others[j]!]![0]!, 0));
    const explained = beta.reduce((t, bj, j) => t + bj * C[others[j]!]![0]!, 0);
    const vifGre = 1 / (1 - explained / C[0]![0]!);
    expect(fit.terms[0]!.vif).toBeCloseTo(vifGre, 8);
    expect(fit.variables[0]!.gvif).toBeCloseTo(vifGre, 8);
    const rk = [2, 3, 4];
    const gvifRank =
      (determinant(rk.map((a) => rk.map((b) => corr[a]![b]!))) * determinant([0, 1].map((a) => [0, 1].map((b) => corr[a]![b]!)))) / determinant(corr);
    expect(fit.variables[2]!.gvif).toBeCloseTo(gvifRank, 8);
    expect(fit.variables[2]!.gvifPerDf).toBeCloseTo(gvifRank ** (1 / 6), 8);
  });

  it("when heats group five consecutive rows, then the cluster-robust SEs are those of statsmodels (CR1) and of R's sandwich::vcovCL (G/(G − 1))", () => {
    // Computed on this machine: statsmodels 0.13.5 GLM(...).fit(cov_type = "cluster") and R 4.2.2
    // sandwich 3.0-2 vcovCL(glm, cluster = ~heat), for heats 1,1,1,1,1,2,2,… (80 heats).
    const cr1 = logisticRegressionMulti(terms, rows);
    expect(cr1.seMethod).toBe("cluster");
    expect(cr1.clusters).toBe(80);
    expect(cr1.method).toContain("G/(G − 1)·(N − 1)/(N − K)");
    const statsmodels = [1.118866103541, 0.001098803089686, 0.3177226847973, 0.3284478453633, 0.3518362238729, 0.4068935328901];
    [cr1.intercept, ...cr1.terms].forEach((t, i) => expect(t.se! / statsmodels[i]!).toBeCloseTo(1, 8));
    const g = logisticRegressionMulti(terms, rows, { smallSample: "G/(G-1)" });
    const sandwich = [1.111833557598, 0.001091896664, 0.315725665741, 0.326383414634, 0.349624786921, 0.404336034627];
    [g.intercept, ...g.terms].forEach((t, i) => expect(t.se! / sandwich[i]!).toBeCloseTo(1, 7));
    // The two differ exactly by √((N − 1)/(N − K)) = √(399/394).
    expect(cr1.terms[0]!.se! / g.terms[0]!.se!).toBeCloseTo(Math.sqrt(399 / 394), 12);
    // The point estimates do not depend on the SEs.
    expect(cr1.terms[1]!.coef).toBeCloseTo(0.804038, 6);
    expect(cr1.notes.join(" ")).toContain("take slabs as independent");
  });

  it("when the odds ratio is given per a readable step, then it is exp(step·b) with the interval scaled alike", () => {
    const fit = logisticRegressionMulti(terms, rows, { se: "model" });
    const gre = fit.terms[0]!;
    const per100 = oddsRatioForStep(gre.coef, gre.se, 100);
    expect(per100.oddsRatio).toBeCloseTo(Math.exp(100 * 0.0022644258), 8);
    expect(per100.ciLower).toBeCloseTo(Math.exp(100 * (gre.coef! - z975 * gre.se!)), 12);
    expect(oddsRatioForStep(null, null, 100).oddsRatio).toBeNull();
  });
});

describe("cluster-robust standard errors by hand", () => {
  // Four heats (slabs, affected): (4, 2), (3, 0), (5, 1), (2, 1). Intercept-only model: p̂ = 4/14 = 2/7,
  // scores per heat u = y − n·p̂ = 6/7, −6/7, −3/7, 3/7 (Σu² = 90/49), bread 1/(N p̂(1 − p̂)) = 49/140.
  // Sandwich: (49/140)² · 90/49 = 0.225; times G/(G − 1) = 4/3 gives 0.3. With one parameter the
  // factor (N − 1)/(N − K) is 1, so both small-sample rules agree. Model-based: 49/140 = 0.35.
  const heats = [
    { heat: "H1", n: 4, x: 2 },
    { heat: "H2", n: 3, x: 0 },
    { heat: "H3", n: 5, x: 1 },
    { heat: "H4", n: 2, x: 1 },
  ];
  const slabRows = heats.flatMap((h) => Array.from({ length: h.n }, (_, i) => ({ values: [], successes: i < h.x ? 1 : 0, trials: 1, cluster: h.heat })));

  it("when only the intercept is fitted, then its cluster-robust variance is the closed form 0.3 and the model-based 0.35", () => {
    const robust = logisticRegressionMulti([], slabRows);
    expect(robust.intercept.coef).toBeCloseTo(Math.log(2 / 5), 10);
    expect(robust.intercept.se).toBeCloseTo(Math.sqrt(0.3), 10);
    expect(robust.clusters).toBe(4);
    const model = logisticRegressionMulti([], slabRows, { se: "model" });
    expect(model.intercept.se).toBeCloseTo(Math.sqrt(0.35), 10);
    // Grouped to one row per heat: the same (each row lies within one heat).
    const grouped = logisticRegressionMulti(
      [],
      heats.map((h) => ({ values: [], successes: h.x, trials: h.n, cluster: h.heat })),
    );
    expect(grouped.intercept.se).toBeCloseTo(Math.sqrt(0.3), 10);
  });

  it("when a two-level term has its heats nested in its levels, then Var(b) is the closed form c·(V₀ + V₁) with either small-sample factor", () => {
    // Level "no": heats (4, 2), (3, 0); level "yes": heats (5, 1), (2, 1), (6, 4). The model is
    // saturated in the levels, so b = logit(6/13) − logit(2/7) and, the heats not straddling levels,
    // Var(b) = c (V₀ + V₁) with V = Σu² / (N p(1 − p))²:
    // V₀ = (72/49) / (10/7)² = 0.72; V₁ = (546/169) / (42/13)² = 546/1764.
    // CR1: c = G/(G − 1)·(N − 1)/(N − K) = 5/4 · 19/18; the cluster factor alone: c = 5/4.
    const spec = [
      { level: "no", heat: "H1", n: 4, x: 2 },
      { level: "no", heat: "H2", n: 3, x: 0 },
      { level: "yes", heat: "H3", n: 5, x: 1 },
      { level: "yes", heat: "H4", n: 2, x: 1 },
      { level: "yes", heat: "H5", n: 6, x: 4 },
    ];
    const r = spec.flatMap((h) => Array.from({ length: h.n }, (_, i) => ({ values: [h.level], successes: i < h.x ? 1 : 0, trials: 1, cluster: h.heat })));
    const term: TermSpec[] = [{ name: "brake", kind: "categorical" }];
    const logit = (p: number) => Math.log(p / (1 - p));
    const V = 0.72 + 546 / 1764;
    const cr1 = logisticRegressionMulti(term, r);
    expect(cr1.terms[0]!.coef).toBeCloseTo(logit(6 / 13) - logit(2 / 7), 10);
    expect(cr1.terms[0]!.se).toBeCloseTo(Math.sqrt((5 / 4) * (19 / 18) * V), 10);
    const g = logisticRegressionMulti(term, r, { smallSample: "G/(G-1)" });
    expect(g.terms[0]!.se).toBeCloseTo(Math.sqrt((5 / 4) * V), 10);
    expect(g.method).toContain("G/(G − 1) alone");
  });

  it("when every slab is in one heat, then cluster-robust SEs are null with a reason", () => {
    const one = logisticRegressionMulti(
      [],
      slabRows.map((r) => ({ ...r, cluster: "H1" })),
    );
    expect(one.intercept.se).toBeNull();
    expect(one.reason).toContain("fewer than two heats");
  });

  it("when cluster-robust SEs are asked without heats, then the call is refused", () => {
    expect(() =>
      logisticRegressionMulti(
        [],
        slabRows.map(({ cluster: _c, ...r }) => r),
        { se: "cluster" },
      ),
    ).toThrow(/cluster/);
  });
});

describe("multivariable logistic regression: what cannot be estimated", () => {
  // Small invented plants: a grade family term and a numeric condition.
  const make = (spec: { family: string; speed: number; n: number; x: number }[]): SlabRow[] =>
    spec.flatMap((s) => Array.from({ length: s.n }, (_, i) => ({ values: [s.family, s.speed], successes: i < s.x ? 1 : 0, trials: 1 })));
  const terms: TermSpec[] = [
    { name: "grade family", kind: "categorical" },
    { name: "casting speed", kind: "numeric" },
  ];

  it("when a grade family has no affected slab, then the model reports separation in words and no odds ratio at all", () => {
    const rows = make([
      { family: "LC", speed: 1.0, n: 20, x: 3 },
      { family: "LC", speed: 1.2, n: 20, x: 5 },
      { family: "PE", speed: 0.9, n: 15, x: 0 },
      { family: "PE", speed: 1.1, n: 15, x: 0 },
      { family: "MC", speed: 1.0, n: 20, x: 4 },
      { family: "MC", speed: 1.3, n: 20, x: 6 },
    ]);
    const fit = logisticRegressionMulti(terms, rows);
    expect(fit.separation?.terms).toEqual(["grade family = PE"]);
    expect(fit.reason).toContain("PE has no affected slab");
    expect(fit.reason).toContain("separation");
    expect(fit.terms.every((t) => t.oddsRatio === null && t.coef === null && t.ciUpper === null)).toBe(true);
    expect(fit.variables[0]!.levels!.find((l) => l.level === "PE")).toMatchObject({ slabs: 30, affected: 0 });
  });

  it("when a numeric condition splits affected from sound slabs, then separation is reported, not a huge odds ratio", () => {
    const rows = make([
      { family: "LC", speed: 0.9, n: 10, x: 0 },
      { family: "MC", speed: 1.0, n: 10, x: 0 },
      { family: "LC", speed: 1.4, n: 10, x: 10 },
      { family: "MC", speed: 1.5, n: 10, x: 10 },
    ]);
    const fit = logisticRegressionMulti(terms, rows);
    expect(fit.separation?.terms).toEqual(["casting speed"]);
    expect(fit.reason).toContain("every affected slab has casting speed at or above every sound slab's");
    expect(fit.terms.every((t) => t.oddsRatio === null)).toBe(true);
  });

  it("when two conditions together split the slabs though neither does alone, then the non-converging fit is reported as separation", () => {
    // Affected exactly when x1 + x2 > 0; each condition alone overlaps between affected and sound.
    const pts = [
      [0, 1, 1],
      [1, 0, 1],
      [2, -1, 1],
      [-1, 2, 1],
      [3, -2, 1],
      [-2, 3, 1],
      [0, -1, 0],
      [-1, 0, 0],
      [1, -2, 0],
      [-2, 1, 0],
      [2, -3, 0],
      [-3, 2, 0],
    ];
    const fit = logisticRegressionMulti(
      [
        { name: "x1", kind: "numeric" },
        { name: "x2", kind: "numeric" },
      ],
      pts.map(([a, b, y]) => ({ values: [a!, b!], successes: y!, trials: 1 })),
    );
    expect(fit.converged).toBe(false);
    expect(fit.separation).not.toBeNull();
    expect(fit.reason).toContain("did not converge");
    expect(fit.terms.every((t) => t.oddsRatio === null)).toBe(true);
  });

  it("when a condition has no spread, then it is not testable with that reason and the rest of the model is fitted", () => {
    const rows = make([
      { family: "LC", speed: 1.1, n: 30, x: 3 },
      { family: "MC", speed: 1.1, n: 30, x: 9 },
    ]);
    const fit = logisticRegressionMulti(terms, rows, { se: "model" });
    const speed = fit.variables.find((v) => v.variable === "casting speed")!;
    expect(speed.df).toBe(0);
    expect(speed.lrP).toBeNull();
    expect(speed.reason).toContain("no spread");
    expect(fit.terms).toHaveLength(1);
    expect(fit.terms[0]!.oddsRatio).toBeCloseTo(9 / 21 / (3 / 27), 8);
  });

  it("when a term is an exact combination of others, then the model is refused with the collinear term named", () => {
    const rows: SlabRow[] = [];
    for (let i = 0; i < 60; i++) {
      const a = (i * 7) % 11;
      const b = (i * 5) % 13;
      rows.push({ values: [a, b, a + b], successes: (i * 3) % 5 === 0 ? 1 : 0, trials: 1 });
    }
    const fit = logisticRegressionMulti(
      [
        { name: "field", kind: "numeric" },
        { name: "current", kind: "numeric" },
        { name: "derived", kind: "numeric" },
      ],
      rows,
    );
    expect(fit.reason).toContain("derived is a linear combination");
    expect(fit.terms.every((t) => t.coef === null && t.vif === null)).toBe(true);
  });

  it("when no slab is affected, then there are no estimates and the reason says why", () => {
    const fit = logisticRegressionMulti(
      terms,
      make([
        { family: "LC", speed: 1, n: 10, x: 0 },
        { family: "MC", speed: 1.2, n: 10, x: 0 },
      ]),
    );
    expect(fit.reason).toContain("no affected slab");
    expect(fit.deviance).toBeNull();
  });

  it("when slabs lack a value, then they are left out of every model alike and counted", () => {
    const rows = make([
      { family: "LC", speed: 1.0, n: 20, x: 3 },
      { family: "LC", speed: 1.2, n: 20, x: 6 },
      { family: "MC", speed: 1.0, n: 20, x: 5 },
      { family: "MC", speed: 1.3, n: 20, x: 9 },
    ]);
    const withGaps = [...rows, { values: ["MC", null], successes: 1, trials: 3 }, { values: [null, 1.1], successes: 0, trials: 2 }];
    const fit = logisticRegressionMulti(terms, withGaps, { se: "model" });
    const clean = logisticRegressionMulti(terms, rows, { se: "model" });
    expect(fit.slabsMissing).toBe(5);
    expect(fit.slabs).toBe(80);
    expect(fit.terms[1]!.coef).toBeCloseTo(clean.terms[1]!.coef!, 12);
    expect(fit.notes.join(" ")).toContain("5 slabs without a value");
  });

  it("when crude and adjusted odds ratios differ by more than a tenth, then the change in estimate says so", () => {
    expect(changeInEstimate(7.85, 0.93)).toMatchObject({ differs: true });
    expect(changeInEstimate(1.05, 1.0).differs).toBe(false);
    expect(changeInEstimate(1.05, 1.0).relativeChange).toBeCloseTo(0.05, 12);
    expect(changeInEstimate(null, 1).differs).toBeNull();
  });
});

describe("direct standardisation to a reference grade mix", () => {
  // Two periods, two grade families (slabs, affected). A: LC 200/10, MC 100/20; B: LC 100/6, MC 300/66.
  // B cast more of the defect-prone family, so its crude rate (0.18) is far above A's (0.10).
  const A = [
    { label: "LC", n: 200, x: 10 },
    { label: "MC", n: 100, x: 20 },
  ];
  const B = [
    { label: "LC", n: 100, x: 6 },
    { label: "MC", n: 300, x: 66 },
  ];

  it("when both periods are standardised to their pooled mix, then the rates are Σ wⱼpⱼ with the binomial variance, by hand", () => {
    // Pooled mix: LC 300, MC 400 → w = 3/7, 4/7 (Rothman, Modern Epidemiology; Fleiss, Statistical
    // Methods for Rates and Proportions: direct standardisation). By hand:
    // A: 3/7·0.05 + 4/7·0.20 = 0.135714…; Var = (3/7)²·0.05·0.95/200 + (4/7)²·0.2·0.8/100.
    const mix = pooledMix(A, B);
    expect(mix).toEqual([
      { label: "LC", weight: 300 },
      { label: "MC", weight: 400 },
    ]);
    const a = directlyStandardisedRate(A, mix);
    const rateA = (3 / 7) * 0.05 + (4 / 7) * 0.2;
    const varA = (3 / 7) ** 2 * ((0.05 * 0.95) / 200) + (4 / 7) ** 2 * ((0.2 * 0.8) / 100);
    expect(a.rate).toBeCloseTo(rateA, 12);
    expect(a.se).toBeCloseTo(Math.sqrt(varA), 12);
    expect(a.ciLower).toBeCloseTo(rateA - z975 * Math.sqrt(varA), 12);
    expect(a.crude).toBeCloseTo(0.1, 12);
    expect(a.method).toContain("direct standardisation");
  });

  it("when the difference of standardised rates is taken, then most of the crude difference goes with the mix, and its interval covers 0", () => {
    const mix = pooledMix(A, B);
    const d = differenceOfStandardisedRates(A, B, mix);
    const rateA = (3 / 7) * 0.05 + (4 / 7) * 0.2;
    const rateB = (3 / 7) * 0.06 + (4 / 7) * 0.22;
    const v = (3 / 7) ** 2 * ((0.05 * 0.95) / 200 + (0.06 * 0.94) / 100) + (4 / 7) ** 2 * ((0.2 * 0.8) / 100 + (0.22 * 0.78) / 300);
    expect(d.difference).toBeCloseTo(rateB - rateA, 12);
    expect(d.difference).toBeCloseTo(0.0157, 4);
    expect(d.se).toBeCloseTo(Math.sqrt(v), 12);
    expect(d.ciLower).toBeCloseTo(rateB - rateA - z975 * Math.sqrt(v), 12);
    expect(d.ciLower!).toBeLessThan(0);
    expect(d.ciUpper!).toBeGreaterThan(0);
  });

  it("when a group's own mix is the reference, then the standardised rate is its crude rate", () => {
    const r = directlyStandardisedRate(B, pooledMix(B));
    expect(r.rate).toBeCloseTo(72 / 400, 12);
  });

  it("when the reference mix holds a family the period never cast, then the standardised rate is null with that family named", () => {
    const r = directlyStandardisedRate(A, [...pooledMix(A), { label: "IF", weight: 50 }]);
    expect(r.rate).toBeNull();
    expect(r.missingStrata).toEqual(["IF"]);
    expect(r.reason).toContain("IF");
    const d = differenceOfStandardisedRates(A, B, [...pooledMix(A, B), { label: "IF", weight: 50 }]);
    expect(d.difference).toBeNull();
    expect(d.reason).toContain("A: no slab in IF");
  });
});

describe("control charts: baseline limits, run rules and the Laney p′ chart", () => {
  // Montgomery, Introduction to Statistical Quality Control, orange-juice cans (30 samples of 50;
  // counts as pinned in stats.test.ts, recalled from the textbook, summing to the published 347).
  const x = [12, 15, 8, 10, 4, 7, 16, 9, 14, 10, 5, 6, 17, 12, 22, 8, 10, 5, 13, 11, 20, 18, 24, 15, 9, 12, 7, 13, 9, 6];
  const cans = x.map((v, i) => ({ period: String(i + 1), n: 50, x: v }));

  it("when samples 15 and 23 (assignable causes) are set aside, then the revised limits are p̄ 0.2150, UCL 0.3893, LCL 0.0407", () => {
    // Montgomery's revised trial limits (recalled); by hand: p̄ = (347 − 22 − 24)/(28·50) = 301/1400.
    const chart = pChartWithBaseline(cans, [], { exclude: ["15", "23"] });
    const p = 301 / 1400;
    const half = 3 * Math.sqrt((p * (1 - p)) / 50);
    expect(chart.centre).toBeCloseTo(p, 12);
    expect(chart.centre).toBeCloseTo(0.215, 4);
    expect(chart.points[0]!.ucl).toBeCloseTo(p + half, 12);
    expect(chart.points[0]!.ucl).toBeCloseTo(0.3893, 4);
    expect(chart.points[0]!.lcl).toBeCloseTo(0.0407, 4);
    expect(chart.points[14]!.excluded).toBe(true);
    expect(chart.baselinePeriods).toBe(28);
  });

  it("when later periods are charted against the baseline, then they get the baseline's limits, not their own", () => {
    const later = [
      { period: "31", n: 50, x: 9 },
      { period: "32", n: 100, x: 40 },
      { period: "33", n: 50, x: 3 },
    ];
    const chart = pChartWithBaseline(cans, later, { exclude: ["15", "23"] });
    const p = 301 / 1400;
    const phase2 = chart.points.filter((q) => q.phase === "monitoring");
    expect(phase2.map((q) => q.period)).toEqual(["31", "32", "33"]);
    expect(phase2[0]!.centre).toBeCloseTo(p, 12);
    expect(phase2[1]!.ucl).toBeCloseTo(p + 3 * Math.sqrt((p * (1 - p)) / 100), 12);
    expect(phase2.map((q) => q.outOfControl)).toEqual([false, true, false]);
    expect(phase2[1]!.z).toBeCloseTo((0.4 - p) / Math.sqrt((p * (1 - p)) / 100), 12);
    expect(chart.method).toContain("Phase I");
  });

  it("when the baseline is all the periods, then the p-chart of the module comes back", () => {
    const a = pChartWithBaseline(cans);
    const b = pChart(cans);
    expect(a.centre).toBeCloseTo(b.pBar, 12);
    a.points.forEach((q, i) => {
      expect(q.ucl).toBeCloseTo(b.points[i]!.ucl, 12);
      expect(q.outOfControl).toBe(b.points[i]!.outOfControl);
    });
  });

  it("when defects per slab are charted, then the u-chart limits come from the baseline ū", () => {
    const c = uChartWithBaseline(
      [
        { period: "1", n: 100, x: 5 },
        { period: "2", n: 100, x: 15 },
      ],
      [{ period: "3", n: 50, x: 20 }],
    );
    expect(c.centre).toBeCloseTo(0.1, 12);
    expect(c.points[2]!.ucl).toBeCloseTo(0.1 + 3 * Math.sqrt(0.1 / 50), 12);
    expect(c.points[2]!.outOfControl).toBe(true);
  });

  it("when the periods vary more than the binomial allows, then the Laney p′ limits widen by σ_z and the false alarm goes", () => {
    // Laney 2002 (Quality Engineering 14(4):531): zᵢ = (pᵢ − p̄)/σ_pᵢ, σ_z = MR̄/1.128, limits
    // p̄ ± 3σ_pᵢσ_z. The paper's own data were not at hand; these values were computed by hand (in a
    // separate script, from those formulas): p̄ = 0.0564706, σ_z = 3.379610, period 1 UCL 0.1304783.
    const n = [1000, 1200, 800, 1000, 1500, 900, 1100, 1000];
    const xs = [50, 80, 30, 70, 60, 55, 90, 45];
    const samples = n.map((v, i) => ({ period: `d${i + 1}`, n: v, x: xs[i]! }));
    const laney = laneyPChart(samples);
    expect(laney.centre).toBeCloseTo(0.0564706, 7);
    expect(laney.sigmaZ).toBeCloseTo(3.37961, 6);
    expect(laney.points[0]!.ucl).toBeCloseTo(0.1304783, 7);
    expect(laney.points[4]!.ucl).toBeCloseTo(0.1168976, 7);
    expect(laney.points[0]!.lcl).toBe(0);
    expect(laney.points.some((q) => q.outOfControl)).toBe(false);
    expect(laney.notes[0]).toContain("overdispersion");
    // The plain p-chart calls period 7 (z = 3.64) out of control.
    expect(
      pChart(samples)
        .points.map((q) => q.outOfControl)
        .indexOf(true),
    ).toBe(6);
  });

  it("when σ_z cannot be estimated, then the Laney limits are null with a reason", () => {
    expect(laneyPChart([{ period: "1", n: 100, x: 5 }]).reason).toContain("fewer than two");
    expect(
      laneyPChart([
        { period: "1", n: 100, x: 0 },
        { period: "2", n: 100, x: 0 },
      ]).sigmaZ,
    ).toBeNull();
  });

  it("when one point is beyond 3σ, then rule 1 fires there only", () => {
    const r = westernElectricRules([0.5, -0.2, 3.2, 0.1]).rules;
    expect(r).toEqual([[], [], [1], []]);
  });

  it("when two of three successive points are beyond 2σ on one side, then rule 2 fires at the second; on opposite sides it does not", () => {
    expect(westernElectricRules([0.5, 2.5, 1.0, 2.2, 0]).rules).toEqual([[], [], [], [2], []]);
    expect(westernElectricRules([0.5, 2.5, -2.5, 0]).rules.flat()).toEqual([]);
    // Three points apart (2.5, 1, 1, 2.2): not within three successive points.
    expect(westernElectricRules([2.5, 1, 1, 2.2]).rules.flat()).toEqual([]);
  });

  it("when four of five successive points are beyond 1σ on one side, then rule 3 fires at the fourth", () => {
    expect(westernElectricRules([1.5, 1.2, 0.3, 1.1, 1.4]).rules).toEqual([[], [], [], [], [3]]);
    expect(westernElectricRules([-1.5, -1.2, -0.3, -1.1, -1.4]).rules[4]).toEqual([3]);
  });

  it("when eight successive points lie on one side, then rule 4 fires at the eighth and at each further one; a point on the centre line breaks the run", () => {
    const run = [0.2, 0.5, 0.1, 0.3, 0.4, 0.2, 0.6, 0.3, 0.1, -0.1];
    expect(westernElectricRules(run).rules).toEqual([[], [], [], [], [], [], [], [4], [4], []]);
    expect(westernElectricRules([0.2, 0.2, 0.2, 0.2, 0, 0.2, 0.2, 0.2, 0.2]).rules.flat()).toEqual([]);
  });

  it("when a period has no point, then the rules run over the plotted points", () => {
    expect(westernElectricRules([1.5, null, 1.2, 0.3, 1.1, 1.4]).rules[5]).toEqual([3]);
  });

  it("when a p-chart's z-scores are checked, then a point beyond its limit is rule 1", () => {
    const chart = pChartWithBaseline(cans);
    const rules = westernElectricRules(chart.points.map((q) => q.z)).rules;
    chart.points.forEach((q, i) => expect(rules[i]!.includes(1)).toBe(q.outOfControl));
  });
});

describe("no spread and a stable variance", () => {
  it("when every value is equal, then the variance is exactly 0 and the variable is marked as having no spread", () => {
    // The one-pass Σx² − n·x̄² leaves a positive remainder for ten values of 1.1.
    const v = new Array<number>(10).fill(1.1);
    const naive = (v.reduce((t, x) => t + x * x, 0) - 10 * (v.reduce((t, x) => t + x, 0) / 10) ** 2) / 9;
    expect(naive).toBeGreaterThan(0);
    const s = spreadOf(v);
    expect(s.variance).toBe(0);
    expect(s.noSpread).toBe(true);
    expect(s.reason).toBe("every value is the same");
    expect(spreadOfGroups([{ value: 0.1, n: 7 }]).variance).toBe(0);
  });

  it("when values sit far from zero, then the variance keeps its digits (Welford) where the one-pass sums lose them", () => {
    const base = [4, 7, 13, 16];
    const shifted = base.map((x) => x + 1e9);
    expect(spreadOf(shifted).variance).toBeCloseTo(ss.sampleVariance(base), 6);
    const grouped = spreadOfGroups([
      { value: 1e9 + 4, n: 2 },
      { value: 1e9 + 7, n: 1 },
      { value: 1e9 + 13, n: 3 },
    ]);
    expect(grouped.variance).toBeCloseTo(ss.sampleVariance([4, 4, 7, 13, 13, 13]), 6);
  });

  it("when two accumulators are merged, then they give the variance of all the values", () => {
    const a = new RunningSpread().add(1).add(2).add(3);
    const b = new RunningSpread().add(10, 2).add(11);
    const s = a.merge(b).result();
    expect(s.n).toBe(6);
    expect(s.variance).toBeCloseTo(ss.sampleVariance([1, 2, 3, 10, 10, 11]), 12);
    expect(s.min).toBe(1);
    expect(s.max).toBe(11);
  });

  it("when a variable has no spread, then Spearman and point-biserial give p null (NaN), never 0, with the reason", () => {
    const g = groupsFrom([1.1, 1.1, 1.1, 1.1, 1.1], [0, 1, 0, 1, 0]);
    const { spearman: s, pointBiserial: pb } = correlationsWithOutcome(g);
    expect(Number.isNaN(s.p)).toBe(true);
    expect(Number.isNaN(pb.p)).toBe(true);
    expect(s.method).toContain("no spread");
    expect(Number.isNaN(spearman([2, 2, 2, 2], [1, 2, 3, 4]).p)).toBe(true);
    expect(Number.isNaN(tTwoSided(NaN, 10))).toBe(true);
    // An infinite t is still a p of 0 in the limit.
    expect(tTwoSided(Infinity, 10)).toBe(0);
  });

  it("when the single-variable logistic regression meets a constant variable, then it says the variable has no spread, not separation", () => {
    const fit = logisticRegression([{ x: [0.1], successes: 2, trials: 5 }]);
    expect(fit.method).toContain("no spread");
    expect(fit.method).not.toContain("separated");
    const outcome = logisticRegression([
      { x: [1], successes: 0, trials: 5 },
      { x: [2], successes: 0, trials: 5 },
    ]);
    expect(outcome.method).toContain("outcome does not vary");
  });
});

describe("degenerate tables and far tails in the existing tests", () => {
  it("when a group of the 2×2 table is empty, then Fisher's test is not testable (NaN with a reason) instead of p = 1", () => {
    const r = fisherExact2x2([
      [0, 0],
      [3, 4],
    ]);
    expect(Number.isNaN(r.pTwoSided)).toBe(true);
    expect(r.method).toContain("not testable");
    // A table with both margins filled is unchanged: the tea-tasting table still gives 34/70.
    expect(
      fisherExact2x2([
        [3, 1],
        [1, 3],
      ]).pTwoSided,
    ).toBeCloseTo(34 / 70, 10);
  });

  it("when the Mann–Whitney normal approximation is far in the lower tail, then p keeps its digits instead of becoming 0", () => {
    // 60 against 60 without ties (normal approximation from 50 on), every first-sample value below
    // every second: z ≈ −9.4, where 1 − P(Z ≥ z) had cancelled to 0.
    const a = Array.from({ length: 60 }, (_, i) => i + 0.5);
    const b = Array.from({ length: 60 }, (_, i) => 100 + i);
    const less = mannWhitney(a, b, "less");
    const two = mannWhitney(a, b);
    expect(less.method).toContain("normal");
    expect(less.p).toBeGreaterThan(0);
    expect(less.p).toBeLessThan(1e-18);
    expect(two.p / less.p).toBeCloseTo(2, 10);
    // By hand: U = 0, mean 1800, σ = √(60·60·121/12), z = (0 − 1800 + 0.5)/σ; P(Z ≤ z) = P(Z ≥ −z).
    const sigma = Math.sqrt((60 * 60 * 121) / 12);
    expect(less.p / normalUpperOf((1800 - 0.5) / sigma)).toBeCloseTo(1, 10);
  });
});
