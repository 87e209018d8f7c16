import { describe, expect, it } from "vitest";
import { explain, trainRiskModel, type RiskData } from "../../server/services/risk/model";
import { aucDeLong } from "../../server/stats/discrimination";
import { logistic } from "../../server/stats/penalised-logistic";

/**
 * Risk models on a plant built by the test from a known model (issue 15): 24,000 slabs cast over two
 * years; the defect's true log-odds rise linearly with mold-level fluctuation, with casting speed, and
 * steeply once superheat passes 30 °C (a non-linear effect the splines must find); one grade family
 * has a higher base rate; argon has no effect at all.
 */
function lcg(seed: number) {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

function knownPlant(n = 24_000, seed = 11) {
  const rnd = lcg(seed);
  const castAt = new Float64Array(n);
  const speed = new Float64Array(n);
  const superheat = new Float64Array(n);
  const level = new Float64Array(n);
  const argon = new Float64Array(n);
  const family = new Int32Array(n);
  const truth = new Float64Array(n);
  const outcome = new Uint8Array(n);
  const t0 = Date.UTC(2025, 0, 1);
  for (let i = 0; i < n; i++) {
    castAt[i] = t0 + i * 45 * 60_000;
    family[i] = rnd() < 0.6 ? 1 : rnd() < 0.5 ? 2 : 3;
    speed[i] = 1.1 + rnd() * 0.7;
    superheat[i] = 15 + rnd() * 25;
    level[i] = 1 + rnd() * 5;
    argon[i] = 4 + rnd() * 8;
    // One slab in fifty has no superheat reading.
    if (rnd() < 0.02) superheat[i] = NaN;
    const sh = Number.isFinite(superheat[i]!) ? superheat[i]! : 27;
    const eta = -4.2 + 0.45 * level[i]! + 1.5 * (speed[i]! - 1.45) + 0.22 * Math.max(0, sh - 30) + (family[i] === 3 ? 0.8 : 0);
    truth[i] = logistic(eta);
    outcome[i] = rnd() < truth[i]! ? 1 : 0;
  }
  const data: RiskData = {
    rows: Int32Array.from({ length: n }, (_, i) => i),
    castAt,
    outcome,
    numeric: [
      { key: "casting_speed_m_min", label: "Casting speed", unit: "m/min", values: speed },
      { key: "superheat_c", label: "Superheat", unit: "°C", values: superheat },
      { key: "mold_level_sd_mm", label: "Mold-level fluctuation", unit: "mm", values: level },
      { key: "argon_nl_min", label: "Argon", unit: "NL/min", values: argon },
    ],
    categorical: [{ key: "grade_family", label: "Grade family", codes: family, name: (c) => ["?", "LCAK", "ULC", "PER"][c] ?? "?" }],
    family,
  };
  return { data, truth, outcome, speed, superheat, level, argon, family };
}

describe("risk models on a plant of known risk", () => {
  const plant = knownPlant();
  const progress: number[] = [];
  const model = trainRiskModel(plant.data, { progress: (f) => progress.push(f) });

  it("when trained on the older three quarters and tested on the newest quarter, then its AUC is within 0.03 of the true model's on the same slabs and its calibration slope within 0.8–1.2", () => {
    const v = model.validation;
    expect(v.testSlabs).toBe(6000);
    expect(v.trainSlabs).toBe(18000);
    // The split is by time: every test slab was cast after every training slab.
    expect(v.splitAt).toBe(plant.data.castAt[18000]);
    const test = Array.from({ length: 6000 }, (_, u) => 18000 + u);
    const trueAuc = aucDeLong({ risk: test.map((i) => plant.truth[i]!), outcome: test.map((i) => plant.outcome[i]!) }).auc!;
    expect(Math.abs(v.auc! - trueAuc)).toBeLessThan(0.03);
    expect(v.calibrationSlope!).toBeGreaterThan(0.8);
    expect(v.calibrationSlope!).toBeLessThan(1.2);
    expect(Math.abs(v.calibrationIntercept!)).toBeLessThan(0.25);
    expect(v.aucCiLower!).toBeLessThan(v.auc!);
    expect(v.aucCiUpper!).toBeGreaterThan(v.auc!);
    // Against the grade-family baseline on the same slabs, the model wins clearly.
    expect(v.baselineAuc!).toBeLessThan(v.auc! - 0.1);
    expect(model.beatsBaseline).toBe(true);
    // The riskiest fifth holds more of the defective slabs than the riskiest tenth, and more than a fifth of them.
    expect(v.captureTop20!).toBeGreaterThan(v.captureTop10!);
    expect(v.captureTop20!).toBeGreaterThan(0.35);
    expect(v.reliability).toHaveLength(10);
    expect(v.reliability.reduce((s, r) => s + r.slabs, 0)).toBe(6000);
    expect(v.brier!).toBeLessThan(v.baselineBrier!);
    expect(model.method).toContain("rolling-origin");
    expect(model.method).toContain("restricted cubic splines with 4 knots");
    // λ was chosen among those tried, each with its out-of-fold deviance.
    expect(model.path.map((p) => p.lambda)).toContain(model.lambda);
    expect(progress[progress.length - 1]).toBe(1);
  });

  it("when a slab cast fast, hot and with a restless mold level is explained, then the reasons name those conditions first and argon last or near nothing", () => {
    const { risk, reasons } = explain(model.terms, [1.78, 39, 5.8, 8], [1]);
    expect(
      reasons
        .slice(0, 3)
        .map((r) => r.variable)
        .sort(),
    ).toEqual(["casting_speed_m_min", "mold_level_sd_mm", "superheat_c"]);
    expect(reasons.slice(0, 3).every((r) => r.contribution > 0)).toBe(true);
    const argon = reasons.find((r) => r.variable === "argon_nl_min")!;
    expect(Math.abs(argon.contribution)).toBeLessThan(0.15);
    const truth = logistic(-4.2 + 0.45 * 5.8 + 1.5 * (1.78 - 1.45) + 0.22 * 9);
    expect(Math.abs(risk - truth)).toBeLessThan(0.08);
    // The typical slab (every condition at its median, the reference family) explains as nothing.
    const typical = explain(
      model.terms,
      model.terms.numeric.map((v) => v.median),
      [model.terms.categorical[0]!.reference],
    );
    typical.reasons.forEach((r) => expect(r.contribution).toBeCloseTo(0, 10));
    // A missing value counts as the typical one.
    const missing = explain(model.terms, [1.78, null, 5.8, 8], [1]);
    expect(missing.reasons.find((r) => r.variable === "superheat_c")!.contribution).toBeCloseTo(0, 10);
    expect(missing.reasons.find((r) => r.variable === "superheat_c")!.value).toBeNull();
  });

  it("when superheat's effect bends at 30 °C, then the spline finds the bend: the risk climbs from 30 to 40 °C far more than from 15 to 25 °C", () => {
    const at = (sh: number) => explain(model.terms, [1.45, sh, 3, 8], [1]).risk;
    const low = Math.log(at(25) / (1 - at(25))) - Math.log(at(15) / (1 - at(15)));
    const high = Math.log(at(40) / (1 - at(40))) - Math.log(at(30) / (1 - at(30)));
    // True: 0 below 30 °C, 2.2 between 30 and 40 °C.
    expect(Math.abs(low)).toBeLessThan(0.6);
    expect(high).toBeGreaterThan(1.4);
  });

  it("when the conditions carry nothing about the defect, then the model does not beat the grade-family baseline and says so", () => {
    const { data } = knownPlant(8000, 5);
    const rnd = lcg(99);
    const noise = Uint8Array.from({ length: 8000 }, (_, i) => (rnd() < (data.family[i] === 3 ? 0.12 : 0.05) ? 1 : 0));
    const m = trainRiskModel({ ...data, outcome: noise });
    expect(m.beatsBaseline).toBe(false);
    expect(m.validation.auc!).toBeLessThan(m.validation.baselineAuc! + 0.05);
  });
});
