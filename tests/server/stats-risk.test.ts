import { describe, expect, it } from "vitest";
import { aucDeLong, brierScore, calibration, captureAtTop, midranks, reliability } from "../../server/stats/discrimination";
import { logisticRegression } from "../../server/stats/logistic";
import { linearPredictor, logistic, penalisedLogistic } from "../../server/stats/penalised-logistic";
import { quantileSorted, splineKnots, splineTerms } from "../../server/stats/splines";

/**
 * The numerics of the risk models (issue 15), each against its definition, a hand computation or a
 * published value, the source beside each check.
 */

/** A small deterministic generator (a linear congruential one) so the data are the same every run. */
function lcg(seed: number) {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

describe("restricted cubic splines (Harrell, Regression Modeling Strategies §2.4.5; Hmisc rcspline.eval, norm = 2)", () => {
  it("when the terms are computed at knots 1, 2, 3, 4, then they equal the truncated-power formula worked by hand", () => {
    // x = 3.5: τ = (4 − 1)² = 9, t_k − t_{k−1} = 1.
    // j = 1: (2.5³ − 0.5³·3 + 0)/9 = (15.625 − 0.375)/9 = 1.694444…; j = 2: (1.5³ − 0.5³·2)/9 = 3.125/9.
    expect(splineTerms(3.5, [1, 2, 3, 4])[0]).toBeCloseTo(15.25 / 9, 12);
    expect(splineTerms(3.5, [1, 2, 3, 4])[1]).toBeCloseTo(3.125 / 9, 12);
    // x = 5 (beyond the last knot): j = 1: (64 − 8·3 + 1·2)/9 = 42/9; j = 2: (27 − 8·2 + 1·1)/9 = 12/9.
    expect(splineTerms(5, [1, 2, 3, 4])).toEqual([expect.closeTo(42 / 9, 12), expect.closeTo(12 / 9, 12)]);
    // Below the first knot every term is 0.
    expect(splineTerms(0.5, [1, 2, 3, 4])).toEqual([0, 0]);
  });

  it("when x runs beyond the outer knots, then every term is linear in x (the 'restricted' of the name)", () => {
    const knots = [1.2, 1.35, 1.5, 1.8];
    for (const j of [0, 1]) {
      const f = (x: number) => splineTerms(x, knots)[j]!;
      // Equal second differences of zero past the last knot, and the terms are 0 before the first.
      expect(f(2.2) - 2 * f(2.0) + f(1.8)).toBeCloseTo(0, 12);
      expect(f(3.0) - 2 * f(2.6) + f(2.2)).toBeCloseTo(0, 12);
      // Inside, the term is genuinely curved.
      expect(Math.abs(f(1.5) - 2 * f(1.4) + f(1.3))).toBeGreaterThan(1e-6);
    }
  });

  it("when knots are placed, then they sit at Harrell's default quantiles (R's type-7 quantile), with the outer knots at the 5th values below 100 values", () => {
    const thousand = Array.from({ length: 1000 }, (_, i) => i + 1);
    // R: quantile(1:1000, c(.05, .35, .65, .95)) = 50.95 350.65 650.35 950.05
    expect(splineKnots(thousand, 4)).toEqual([expect.closeTo(50.95, 10), expect.closeTo(350.65, 10), expect.closeTo(650.35, 10), expect.closeTo(950.05, 10)]);
    // R: quantile(1:1000, c(.1, .5, .9)) = 100.9 500.5 900.1
    expect(splineKnots(thousand, 3)).toEqual([expect.closeTo(100.9, 10), expect.closeTo(500.5, 10), expect.closeTo(900.1, 10)]);
    // 50 values: outer knots at the 5th smallest (5) and 5th largest (46); inner at quantile(1:50, c(.35, .65)) = 18.15 32.85.
    const fifty = Array.from({ length: 50 }, (_, i) => 50 - i);
    expect(splineKnots(fifty, 4)).toEqual([5, expect.closeTo(18.15, 10), expect.closeTo(32.85, 10), 46]);
    expect(quantileSorted([1, 2, 3, 4], 0.5)).toBe(2.5);
    // A variable with two values cannot carry a spline: the knots merge.
    expect(
      splineKnots(
        Array.from({ length: 200 }, (_, i) => (i % 2 ? 180 : 0)),
        4,
      ),
    ).toEqual([0, 180]);
    // Missing values are skipped; with 6 values the quantiles stand: quantile(c(1, 2, 3, 5, 6, 7), c(.1, .5, .9)) = 1.5 4 6.5.
    expect(splineKnots([1, 2, 3, NaN, 5, 6, 7], 3)).toEqual([expect.closeTo(1.5, 12), 4, expect.closeTo(6.5, 12)]);
    expect(splineKnots([1, 2, 3, 4, 5], 3)).toEqual([]);
  });
});

describe("penalised logistic regression (ridge on column variances, as rms::lrm's simple penalty)", () => {
  // 3,000 slabs, two conditions on different scales and a true model logit p = −2 + 0.8·x1 + 0.02·(x2 − 1550).
  const n = 3000;
  const rnd = lcg(42);
  const x1 = new Float64Array(n);
  const x2 = new Float64Array(n);
  const y = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    x1[i] = rnd() * 3;
    x2[i] = 1530 + rnd() * 40;
    y[i] = rnd() < logistic(-2 + 0.8 * x1[i]! + 0.02 * (x2[i]! - 1550)) ? 1 : 0;
  }
  const rows = Int32Array.from({ length: n }, (_, i) => i);

  it("when λ is 0, then it is the maximum-likelihood fit of logistic.ts, and its effective degrees of freedom are the parameter count", () => {
    const fit = penalisedLogistic([x1, x2], y, rows, { lambda: 0 });
    const ml = logisticRegression(Array.from({ length: n }, (_, i) => ({ x: [x1[i]!, x2[i]!], successes: y[i]!, trials: 1 })));
    expect(fit.converged).toBe(true);
    fit.coefficients.forEach((b, j) => expect(b).toBeCloseTo(ml.coefficients[j]!, 6));
    // The inverse information gives the same standard errors as the unpenalised fit.
    fit.covariance!.forEach((row, j) => expect(Math.sqrt(row[j]!)).toBeCloseTo(ml.standardErrors[j]!, 6));
    expect(fit.effectiveDf).toBeCloseTo(3, 8);
    expect(fit.method).toContain("λ = 0 (no penalty)");
  });

  it("when λ > 0, then the penalised score equations hold at the solution: X′(y − p) = λ·v_j·β_j for each column, and Σ(y − p) = 0", () => {
    const lambda = 40;
    const fit = penalisedLogistic([x1, x2], y, rows, { lambda });
    expect(fit.converged).toBe(true);
    const mean = (c: Float64Array) => c.reduce((s, v) => s + v, 0) / n;
    const variance = (c: Float64Array) => {
      const m = mean(c);
      return c.reduce((s, v) => s + (v - m) ** 2, 0) / n;
    };
    let s0 = 0;
    let s1 = 0;
    let s2 = 0;
    for (let i = 0; i < n; i++) {
      const r = y[i]! - logistic(linearPredictor(fit.coefficients, [x1, x2], i));
      s0 += r;
      s1 += r * x1[i]!;
      s2 += r * x2[i]!;
    }
    expect(s0).toBeCloseTo(0, 6);
    // With Σr = 0, Σ r·x equals Σ r·(x − mean), the centred score the penalty balances.
    expect(s1).toBeCloseTo(lambda * variance(x1) * fit.coefficients[1]!, 5);
    expect(s2).toBeCloseTo(lambda * variance(x2) * fit.coefficients[2]!, 5);
    // Shrunk towards 0 against the unpenalised fit, with fewer effective degrees of freedom.
    const ml = penalisedLogistic([x1, x2], y, rows, { lambda: 0 });
    expect(Math.abs(fit.coefficients[1]!)).toBeLessThan(Math.abs(ml.coefficients[1]!));
    expect(fit.effectiveDf!).toBeLessThan(3);
    expect(fit.effectiveDf!).toBeGreaterThan(1);
  });

  it("when λ is huge, then the slopes vanish and the intercept is the logit of the defect rate; a warm start reaches the same fit", () => {
    const fit = penalisedLogistic([x1, x2], y, rows, { lambda: 1e9 });
    const rate = y.reduce((s, v) => s + v, 0) / n;
    expect(fit.coefficients[0]).toBeCloseTo(Math.log(rate / (1 - rate)), 4);
    expect(Math.abs(fit.coefficients[1]!)).toBeLessThan(1e-6);
    expect(fit.effectiveDf).toBeCloseTo(1, 4);
    const cold = penalisedLogistic([x1, x2], y, rows, { lambda: 5 });
    const warm = penalisedLogistic([x1, x2], y, rows, { lambda: 5, start: penalisedLogistic([x1, x2], y, rows, { lambda: 50 }).coefficients });
    warm.coefficients.forEach((b, j) => expect(b).toBeCloseTo(cold.coefficients[j]!, 7));
  });

  it("when the rows are a subset (a time split), then only those slabs are fitted; no defect at all gives null figures with the reason", () => {
    const first = Int32Array.from({ length: 1500 }, (_, i) => i);
    const sub = penalisedLogistic([x1, x2], y, first, { lambda: 0 });
    const ml = logisticRegression(Array.from({ length: 1500 }, (_, i) => ({ x: [x1[i]!, x2[i]!], successes: y[i]!, trials: 1 })));
    expect(sub.n).toBe(1500);
    sub.coefficients.forEach((b, j) => expect(b).toBeCloseTo(ml.coefficients[j]!, 6));
    const none = penalisedLogistic([x1], new Uint8Array(n), rows, { lambda: 1 });
    expect(none.converged).toBe(false);
    expect(none.coefficients.every(Number.isNaN)).toBe(true);
    expect(none.method).toContain("no slab carries the defect");
    const twin = penalisedLogistic([x1, Float64Array.from(x1)], y, rows, { lambda: 0 });
    expect(twin.method).toContain("collinear");
  });
});

describe("discrimination and calibration", () => {
  it("when the AUC is taken of Hanley & McNeil's CT ratings, then it is their published 0.893", () => {
    // Hanley & McNeil (1982), Radiology 143:29, Table 1: ratings 1–5 of 58 normal and 51 abnormal scans;
    // published area 0.893 (the trapezoidal area, the Mann–Whitney estimate with ties counted ½).
    const normal = [33, 6, 6, 11, 2];
    const abnormal = [3, 2, 2, 11, 33];
    const risk: number[] = [];
    const outcome: number[] = [];
    normal.forEach((c, k) => risk.push(...Array<number>(c).fill(k + 1)) && outcome.push(...Array<number>(c).fill(0)));
    abnormal.forEach((c, k) => risk.push(...Array<number>(c).fill(k + 1)) && outcome.push(...Array<number>(c).fill(1)));
    const r = aucDeLong({ risk, outcome });
    expect(r.auc).toBeCloseTo(0.8932, 4);
    expect(r.positives).toBe(51);
    expect(r.negatives).toBe(58);
    // Their SE, 0.032, comes from their exponential approximation, not DeLong's components; DeLong's is
    // close to it but not equal, so only its neighbourhood is checked here (the exact check is the next test).
    expect(r.se!).toBeGreaterThan(0.02);
    expect(r.se!).toBeLessThan(0.045);
  });

  it("when DeLong's variance is taken on seven slabs, then it equals the structural components worked by hand", () => {
    // Defective slabs' risks 0.9, 0.8, 0.6; clean 0.7, 0.5, 0.3, 0.2.
    // V10 = 1, 1, 3/4; V01 = 2/3, 1, 1, 1; AUC = 11/12.
    // S10 = ((1/12)²·2 + (1/6)²)/2 = 0.0208333…; S01 = ((1/4)² + (1/12)²·3)/3 = 0.0277777…
    // Var = S10/3 + S01/4 = 0.0138888…; SE = 0.1178511…
    const r = aucDeLong({ risk: [0.9, 0.8, 0.6, 0.7, 0.5, 0.3, 0.2], outcome: [1, 1, 1, 0, 0, 0, 0] });
    expect(r.auc).toBeCloseTo(11 / 12, 12);
    expect(r.se).toBeCloseTo(Math.sqrt(0.0138888888888889), 12);
    expect(r.lower).toBeCloseTo(11 / 12 - 1.959963985 * Math.sqrt(0.0138888888888889), 8);
    expect(r.upper).toBe(1); // 0.9167 + 0.2310 is cut at 1
    // With a tie counted ½: defective 0.9, 0.5; clean 0.5, 0.1: AUC 0.875, S10 = S01 = 0.03125, Var = 0.03125.
    const t = aucDeLong({ risk: [0.9, 0.5, 0.5, 0.1], outcome: [1, 1, 0, 0] });
    expect(t.auc).toBeCloseTo(0.875, 12);
    expect(t.se).toBeCloseTo(Math.sqrt(0.03125), 12);
    expect(midranks([3, 1, 3, 2])).toEqual(Float64Array.from([3.5, 1, 3.5, 2]));
  });

  it("when a statistic is undefined, then it is null with the reason, never 0 or 1", () => {
    const none = aucDeLong({ risk: [0.1, 0.2], outcome: [0, 0] });
    expect(none.auc).toBeNull();
    expect(none.reason).toBe("no slab carried the defect");
    const one = aucDeLong({ risk: [0.3, 0.1, 0.2], outcome: [1, 0, 0] });
    expect(one.auc).toBe(1);
    expect(one.se).toBeNull();
    expect(one.reason).toContain("at least two");
    expect(calibration({ risk: [0.2, 0.3], outcome: [1, 1] }).slope).toBeNull();
    expect(brierScore({ risk: [], outcome: [] })).toBeNull();
    expect(captureAtTop({ risk: [0.2], outcome: [0] }, 0.1)).toBeNull();
  });

  it("when the Brier score is taken by hand, then (0.1² + 0.6² + 0.2²)/3", () => {
    expect(brierScore({ risk: [0.1, 0.4, 0.8], outcome: [0, 1, 1] })).toBeCloseTo(0.41 / 3, 14);
  });

  it("when risks are a logistic model's own fit, then calibration intercept is 0 and slope 1; when their logits are stretched, then the slope is the inverse stretch", () => {
    const n = 2000;
    const rnd = lcg(7);
    const x = new Float64Array(n);
    const y = new Uint8Array(n);
    for (let i = 0; i < n; i++) {
      x[i] = rnd() * 4 - 2;
      y[i] = rnd() < logistic(-1 + 1.2 * x[i]!) ? 1 : 0;
    }
    const fit = penalisedLogistic(
      [x],
      y,
      Int32Array.from({ length: n }, (_, i) => i),
      { lambda: 0 },
    );
    const lp = Array.from(x, (v) => fit.coefficients[0]! + fit.coefficients[1]! * v);
    // The fitted model solves its own score equations, which are the calibration fits' equations at (0, 1).
    const own = calibration({ risk: lp.map(logistic), outcome: y });
    expect(own.intercept).toBeCloseTo(0, 8);
    expect(own.slope).toBeCloseTo(1, 8);
    // Risks with logit 0.3 + 2·lp: the slope model y ~ b0 + b1·(0.3 + 2·lp) is solved by b1 = 1/2, b0 = −0.3/2.
    const stretched = calibration({ risk: lp.map((e) => logistic(0.3 + 2 * e)), outcome: y });
    expect(stretched.slope).toBeCloseTo(0.5, 7);
  });

  it("when the riskiest tenth is taken, then the share of defective slabs caught counts ties at the cut in proportion", () => {
    // 10 slabs, 4 defective; top 20 % = 2 slabs: risks 0.9 (defective) and 0.8 tied with another 0.8 (one defective of the two).
    const risk = [0.9, 0.8, 0.8, 0.5, 0.4, 0.3, 0.3, 0.2, 0.1, 0.05];
    const outcome = [1, 1, 0, 0, 1, 0, 0, 1, 0, 0];
    // Slab 1 caught; of the tied pair one place is left: ½ of its one defective. (1 + 0.5)/4.
    expect(captureAtTop({ risk, outcome }, 0.2)).toBeCloseTo(1.5 / 4, 12);
    expect(captureAtTop({ risk, outcome }, 0.1)).toBeCloseTo(1 / 4, 12);
    expect(captureAtTop({ risk, outcome }, 1)).toBeCloseTo(1, 12);
    const points = reliability({ risk, outcome }, 2);
    expect(points).toEqual([
      { predicted: expect.closeTo((0.05 + 0.1 + 0.2 + 0.3 + 0.3) / 5, 12), observed: 0.2, slabs: 5 },
      { predicted: expect.closeTo((0.4 + 0.5 + 0.8 + 0.8 + 0.9) / 5, 12), observed: 0.6, slabs: 5 },
    ]);
  });
});
