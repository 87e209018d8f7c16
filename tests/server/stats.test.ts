import { describe, expect, it } from "vitest";
import jStatModule from "jstat";
import * as ss from "simple-statistics";
import { binnedRates, equalWidthEdges, quantileEdges } from "../../server/stats/binning";
import { chiSquareIndependence, fisherExact2x2 } from "../../server/stats/contingency";
import { chiSquareUpper, normalTwoSided, tTwoSided } from "../../server/stats/distributions";
import { logisticRegression } from "../../server/stats/logistic";
import { mannWhitney, mannWhitneyGrouped } from "../../server/stats/mann-whitney";
import { benjaminiHochberg } from "../../server/stats/multiple";
import { differenceOfProportions, ratePer, wilson } from "../../server/stats/proportions";
import { groupsFrom } from "../../server/stats/ranks";
import { linearRegression, welchTTest } from "../../server/stats/regression";
import { correlationsWithOutcome, spearman } from "../../server/stats/spearman";
import { pChart, uChart } from "../../server/stats/control";

const { jStat } = jStatModule as unknown as { jStat: any };

describe("proportions", () => {
  it.each([
    // Newcombe 1998, Stat. Med. 17:857, Table I, method 3 (Wilson score, without continuity correction)
    { x: 81, n: 263, lo: 0.2553, hi: 0.3662 },
    { x: 15, n: 148, lo: 0.0624, hi: 0.1605 },
    { x: 0, n: 20, lo: 0, hi: 0.1611 },
    { x: 1, n: 29, lo: 0.0061, hi: 0.1718 },
  ])("when $x of $n, then the Wilson 95 percent interval is $lo to $hi (Newcombe 1998)", ({ x, n, lo, hi }) => {
    const w = wilson(x, n);
    expect(w.lower).toBeCloseTo(lo, 4);
    expect(w.upper).toBeCloseTo(hi, 4);
  });

  it("when rates are asked per 100 slabs and per 1000 t, then they scale the count", () => {
    expect(ratePer(13, 250, 100)).toBeCloseTo(5.2, 12);
    expect(ratePer(13, 6500, 1000)).toBeCloseTo(2, 12);
  });

  it("when two proportions are compared, then Newcombe's hybrid interval brackets the difference", () => {
    // Newcombe 1998, Stat. Med. 17:873, method 10, example (a) 56/70 − 48/80: 0.2000, interval 0.0524 to 0.3339
    // (recalled from the paper's table; consistent to three decimals)
    const d = differenceOfProportions(56, 70, 48, 80);
    expect(d.difference).toBeCloseTo(0.2, 10);
    expect(d.lower).toBeCloseTo(0.0524, 3);
    expect(d.upper).toBeCloseTo(0.3339, 3);
  });
});

describe("rank correlation and rank tests", () => {
  // Hollander & Wolfe data as in R's cor.test example
  const x = [44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1];
  const y = [2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8];

  it("when Spearman is computed on the Hollander & Wolfe data, then ρ = 0.6 and the exact two-sided p = 0.0968", () => {
    const r = spearman(x, y);
    expect(r.rho).toBeCloseTo(0.6, 12);
    expect(r.p).toBeCloseTo(0.0968, 4);
    expect(r.method).toContain("exact");
  });

  it("when Mann–Whitney is run on R's wilcox.test example (greater), then W = 35 and the exact p = 0.1272", () => {
    // R: wilcox.test(x, y, alternative = "g") for the depression scale example
    const a = [0.8, 0.83, 1.89, 1.04, 1.45, 1.38, 1.91, 1.64, 0.73, 1.46];
    const b = [1.15, 0.88, 0.9, 0.74, 1.21];
    const r = mannWhitney(a, b, "greater");
    expect(r.u).toBe(35);
    expect(r.p).toBeCloseTo(0.1272, 4);
    expect(r.method).toContain("exact");
  });

  it("when there are ties or large samples, then the normal approximation agrees with jstat's normal tail on the same z", () => {
    const a = [1, 2, 2, 3, 3, 3, 4, 5, 6, 7, 7, 8];
    const b = [3, 4, 4, 5, 6, 6, 7, 8, 8, 9, 9, 10, 11];
    const r = mannWhitney(a, b);
    // Independently: U by counting pairs (ties count half), the tie term from the value counts,
    // then the textbook normal approximation with continuity correction and jstat's normal tail.
    let u = 0;
    for (const va of a) for (const vb of b) u += va > vb ? 1 : va === vb ? 0.5 : 0;
    expect(r.u).toBe(u);
    const all = [...a, ...b];
    const n = all.length;
    const counts = [...new Set(all)].map((v) => all.filter((w) => w === v).length);
    const ties = counts.reduce((s, t) => s + t ** 3 - t, 0);
    const sigma = Math.sqrt(((a.length * b.length) / 12) * (n + 1 - ties / (n * (n - 1))));
    const mean = (a.length * b.length) / 2;
    const z = (u - mean - Math.sign(u - mean) * 0.5) / sigma;
    expect(r.p).toBeCloseTo(2 * jStat.normal.cdf(-Math.abs(z), 0, 1), 10);
  });
});

describe("regression", () => {
  it("when the NIST StRD Norris data are fitted, then the certified values come back", () => {
    // NIST/ITL StRD, Norris.dat (Norris, J., Calibration of Ozone Monitors): certified values
    const nx = [
      0.2, 337.4, 118.2, 884.6, 10.1, 226.5, 666.3, 996.3, 448.6, 777.0, 558.2, 0.4, 0.6, 775.5, 666.9, 338.0, 447.5, 11.6, 556.0, 228.1, 995.8, 887.6, 120.2,
      0.3, 0.3, 556.8, 339.1, 887.2, 999.0, 779.0, 11.1, 118.3, 229.2, 669.1, 448.9, 0.5,
    ];
    const ny = [
      0.1, 338.8, 118.1, 888.0, 9.2, 228.1, 668.5, 998.5, 449.1, 778.9, 559.2, 0.3, 0.1, 778.1, 668.8, 339.3, 448.9, 10.8, 557.7, 228.3, 998.0, 888.8, 119.6,
      0.3, 0.6, 557.6, 339.3, 888.0, 998.5, 778.9, 10.2, 117.6, 228.9, 668.4, 449.2, 0.2,
    ];
    const fit = linearRegression(nx, ny);
    expect(fit.intercept).toBeCloseTo(-0.262323073774029, 12);
    expect(fit.slope).toBeCloseTo(1.00211681802045, 13);
    expect(fit.rSquared).toBeCloseTo(0.999993745883712, 14);
    expect(fit.seSlope).toBeCloseTo(0.429796848199937e-3, 15);
    expect(fit.residualSd).toBeCloseTo(0.884796396144373, 12);
  });

  it("when the Challenger O-ring data are fitted by logistic regression, then intercept 15.0429 and slope −0.2322", () => {
    // Challenger launches before 1986, temperature (°F) and O-ring incident (yes/no), 23 flights as in
    // Dalal, Fowlkes & Hoadley 1989 (JASA 84:945); the rows are pinned here.
    const temp = [66, 70, 69, 68, 67, 72, 73, 70, 57, 63, 70, 78, 67, 53, 67, 75, 70, 81, 76, 79, 75, 76, 58];
    const fail = [0, 1, 0, 0, 0, 0, 0, 0, 1, 1, 1, 0, 0, 1, 0, 0, 0, 0, 0, 0, 1, 0, 1];
    const fit = logisticRegression(temp.map((t, i) => ({ x: [t], successes: fail[i]!, trials: 1 })));
    expect(fit.converged).toBe(true);
    expect(fit.coefficients[0]).toBeCloseTo(15.0429, 3);
    expect(fit.coefficients[1]).toBeCloseTo(-0.2322, 4);
    // Standard errors as R's glm prints them for these rows (recalled: 7.3786 and 0.1082), Wald p of the slope 0.032
    expect(fit.standardErrors[0]).toBeCloseTo(7.3786, 2);
    expect(fit.standardErrors[1]).toBeCloseTo(0.1082, 3);
    expect(fit.p[1]).toBeCloseTo(0.032, 3);
    expect(fit.oddsRatios[0]!.value).toBeCloseTo(Math.exp(-0.2322), 3);
  });

  it("when the same data come grouped (successes out of trials per temperature), then the fit is identical", () => {
    const temp = [66, 70, 69, 68, 67, 72, 73, 70, 57, 63, 70, 78, 67, 53, 67, 75, 70, 81, 76, 79, 75, 76, 58];
    const fail = [0, 1, 0, 0, 0, 0, 0, 0, 1, 1, 1, 0, 0, 1, 0, 0, 0, 0, 0, 0, 1, 0, 1];
    const rows = groupsFrom(temp, fail as (0 | 1)[]).map((g) => ({ x: [g.value], successes: g.affected, trials: g.n }));
    const fit = logisticRegression(rows);
    expect(fit.coefficients[0]).toBeCloseTo(15.0429, 3);
    expect(fit.coefficients[1]).toBeCloseTo(-0.2322, 4);
  });

  it("when Welch's test is run on R's sleep data, then t = −1.8608, df = 17.776, p = 0.0794", () => {
    // R datasets::sleep, t.test(extra ~ group) (Welch); values recalled from R's output
    const g1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0];
    const g2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4];
    const summary = (v: number[]) => ({ n: v.length, mean: ss.mean(v), variance: ss.sampleVariance(v) });
    const r = welchTTest(summary(g1), summary(g2));
    expect(r.t).toBeCloseTo(-1.8608, 4);
    expect(r.df).toBeCloseTo(17.776, 3);
    expect(r.p).toBeCloseTo(0.07939, 4);
  });
});

describe("categorical tests", () => {
  it("when Fisher's exact test is run on the tea-tasting table [[3,1],[1,3]], then one-sided 17/70 and two-sided 34/70", () => {
    const r = fisherExact2x2([
      [3, 1],
      [1, 3],
    ]);
    expect(r.pGreater).toBeCloseTo(17 / 70, 10); // 0.2429
    expect(r.pTwoSided).toBeCloseTo(34 / 70, 10); // 0.4857
  });

  it("when chi-square is run on Agresti's table, then X² = 30.0701, df 2, p = 2.954e-07", () => {
    // Agresti 2007, An Introduction to Categorical Data Analysis, p. 39 (party by gender)
    const r = chiSquareIndependence([
      [762, 327, 468],
      [484, 239, 477],
    ]);
    expect(r.statistic).toBeCloseTo(30.0701, 3);
    expect(r.df).toBe(2);
    expect(r.p / 2.954e-7).toBeCloseTo(1, 3);
  });

  it("when the Benjamini–Hochberg example is adjusted, then 4 of 15 are rejected at q = 0.05", () => {
    // Benjamini & Hochberg 1995, J. R. Stat. Soc. B 57:289, the 15 p-values of their example
    const p = [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.324, 0.4262, 0.5719, 0.6528, 0.759, 1.0];
    const adj = benjaminiHochberg(p);
    expect(adj.filter((v) => v <= 0.05)).toHaveLength(4);
    expect(adj[3]).toBeCloseTo((0.0095 * 15) / 4, 10);
    // Monotone in the p-values, and in the input order.
    expect([...adj].sort((a, b) => a - b)).toEqual(adj);
  });
});

describe("control charts", () => {
  it("when Montgomery's orange-juice can data are charted, then p̄ 0.2313, UCL 0.4102, LCL 0.0524 and samples 15 and 23 are out", () => {
    // Montgomery, Introduction to Statistical Quality Control: 30 samples of n = 50 cans. The counts
    // are recalled from the textbook; they sum to the published 347 and flag the published samples.
    const x = [12, 15, 8, 10, 4, 7, 16, 9, 14, 10, 5, 6, 17, 12, 22, 8, 10, 5, 13, 11, 20, 18, 24, 15, 9, 12, 7, 13, 9, 6];
    expect(x.reduce((s, v) => s + v, 0)).toBe(347);
    const chart = pChart(x.map((v, i) => ({ period: String(i + 1), n: 50, x: v })));
    expect(chart.pBar).toBeCloseTo(0.2313, 4);
    expect(chart.points[0]!.ucl).toBeCloseTo(0.4102, 4);
    expect(chart.points[0]!.lcl).toBeCloseTo(0.0524, 4);
    expect(chart.points.filter((p) => p.outOfControl).map((p) => p.period)).toEqual(["15", "23"]);
  });

  it("when sample sizes vary, then each point gets its own limits and the lower limit stops at 0", () => {
    const chart = pChart([
      { period: "a", n: 10, x: 1 },
      { period: "b", n: 1000, x: 100 },
    ]);
    expect(chart.points[0]!.lcl).toBe(0);
    expect(chart.points[1]!.ucl - chart.points[1]!.lcl).toBeLessThan(chart.points[0]!.ucl - chart.points[0]!.lcl);
  });

  it("when counts per unit are charted, then the u-chart limits are ū ± 3√(ū/n)", () => {
    const c = uChart([
      { period: "1", units: 100, count: 5 },
      { period: "2", units: 100, count: 15 },
    ]);
    expect(c.uBar).toBeCloseTo(0.1, 12);
    expect(c.points[0]!.ucl).toBeCloseTo(0.1 + 3 * Math.sqrt(0.1 / 100), 12);
  });
});

describe("binning", () => {
  const groups = groupsFrom([1, 2, 3, 4, 5, 6, 7, 8, 9, 10], [0, 0, 0, 0, 1, 0, 1, 1, 1, 1]);
  it("when binned in equal widths, then counts and rates per bin are right", () => {
    const bins = binnedRates(groups, equalWidthEdges(groups, 2));
    expect(bins.map((b) => [b.lower, b.upper, b.slabs, b.affected])).toEqual([
      [1, 5.5, 5, 1],
      [5.5, 10, 5, 4],
    ]);
    expect(bins[1]!.rate).toBe(0.8);
  });
  it("when binned by quantiles, then each bin holds about the same number of slabs", () => {
    const bins = binnedRates(groups, quantileEdges(groups, 5));
    expect(bins.map((b) => b.slabs)).toEqual([2, 2, 2, 2, 2]);
  });
  it("when a bin has fewer slabs than the minimum, then it is merged with a neighbour", () => {
    const bins = binnedRates(groups, [1, 2, 9, 10], 3);
    expect(bins.every((b) => b.slabs >= 3)).toBe(true);
    expect(bins.reduce((s, b) => s + b.slabs, 0)).toBe(10);
  });
  it("when equal-width bins fall between the values a condition takes (a brake run at 0, 120 or 240 A), then the empty ones are merged without a gap and their spans are named", () => {
    const brake = groupsFrom([0, 0, 0, 120, 120, 240, 240, 240, 240], [0, 1, 0, 0, 1, 1, 1, 0, 1]);
    const spans: { lower: number; upper: number }[] = [];
    const bins = binnedRates(brake, equalWidthEdges(brake, 10), 1, spans);
    // Ten bins of 24 A: 0 in the first, 120 in the sixth, 240 in the last; the empty ones join a neighbour.
    expect(spans).toEqual([
      { lower: 24, upper: 120 },
      { lower: 144, upper: 216 },
    ]);
    expect(bins[0]!.lower).toBe(0);
    expect(bins[bins.length - 1]!.upper).toBe(240);
    for (let k = 1; k < bins.length; k++) expect(bins[k]!.lower).toBe(bins[k - 1]!.upper);
    expect(bins.map((b) => [b.slabs, b.affected])).toEqual([
      [3, 1],
      [2, 1],
      [4, 3],
    ]);
  });
});

describe("agreement with jstat and simple-statistics on random data", () => {
  // A seeded generator so a failure can be reproduced.
  let seed = 20261201;
  const rnd = () => (seed = (seed * 1664525 + 1013904223) >>> 0) / 2 ** 32;
  const normal = () => Math.sqrt(-2 * Math.log(rnd() + 1e-12)) * Math.cos(2 * Math.PI * rnd());

  it("when 20 random samples are correlated, then Spearman's ρ equals simple-statistics' sampleRankCorrelation", () => {
    for (let k = 0; k < 20; k++) {
      const n = 12 + Math.floor(rnd() * 200);
      const x = Array.from({ length: n }, normal);
      const y = x.map((v) => v * rnd() + normal());
      expect(spearman(x, y).rho).toBeCloseTo(ss.sampleRankCorrelation(x, y), 10);
    }
  });

  it("when the outcome is binary, then the grouped Spearman and point-biserial equal the plain computations", () => {
    for (let k = 0; k < 10; k++) {
      const n = 40 + Math.floor(rnd() * 300);
      const x = Array.from({ length: n }, () => Math.round(normal() * 50) / 10);
      const yb = x.map((v) => (rnd() < 1 / (1 + Math.exp(-v)) ? 1 : 0)) as (0 | 1)[];
      const { spearman: s, pointBiserial: pb } = correlationsWithOutcome(groupsFrom(x, yb));
      expect(s.rho).toBeCloseTo(ss.sampleRankCorrelation(x, yb), 10);
      expect(pb.rho).toBeCloseTo(ss.sampleCorrelation(x, yb), 10);
    }
  });

  it("when our distribution tails are compared with jstat's, then they agree", () => {
    for (const [t, df] of [
      [0.5, 3],
      [2.1, 10],
      [-3.3, 25],
      [1.96, 1000],
    ] as const) {
      // jstat's t cdf carries about 8 digits
      expect(tTwoSided(t, df)).toBeCloseTo(2 * (1 - jStat.studentt.cdf(Math.abs(t), df)), 7);
    }
    for (const [x, df] of [
      [1, 1],
      [5.99, 2],
      [30.07, 2],
      [12, 7],
    ] as const) {
      expect(chiSquareUpper(x, df)).toBeCloseTo(1 - jStat.chisquare.cdf(x, df), 9);
    }
    expect(normalTwoSided(1.959964)).toBeCloseTo(0.05, 6);
  });

  it("when random 2×2 and r×c tables are tested, then chi-square agrees with jstat and Fisher's margins sum to 1", () => {
    for (let k = 0; k < 10; k++) {
      const t = [0, 1, 2].map(() => [0, 1, 2].map(() => 5 + Math.floor(rnd() * 60)));
      const r = chiSquareIndependence(t);
      expect(r.p).toBeCloseTo(1 - jStat.chisquare.cdf(r.statistic, 4), 9);
      const f = fisherExact2x2([
        [t[0]![0]!, t[0]![1]!],
        [t[1]![0]!, t[1]![1]!],
      ]);
      // P(A ≤ a) + P(A ≥ a) − P(A = a) = 1
      expect(f.pLess + f.pGreater).toBeGreaterThan(1);
      expect(f.pTwoSided).toBeLessThanOrEqual(1);
    }
  });

  it("when grouped Mann–Whitney runs on tied random data, then U equals the count of (affected > sound) pairs plus half the ties", () => {
    for (let k = 0; k < 10; k++) {
      const n = 30 + Math.floor(rnd() * 80);
      const v = Array.from({ length: n }, () => Math.floor(rnd() * 12));
      const a = v.map(() => (rnd() < 0.3 ? 1 : 0)) as (0 | 1)[];
      const r = mannWhitneyGrouped(groupsFrom(v, a));
      let pairs = 0;
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (a[i] && !a[j]) pairs += v[i]! > v[j]! ? 1 : v[i] === v[j] ? 0.5 : 0;
      expect(r.u).toBeCloseTo(pairs, 9);
    }
  });
});
