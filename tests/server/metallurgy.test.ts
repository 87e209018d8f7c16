import { describe, expect, it } from "vitest";
import { liquidusC, superheatC, WON_THOMAS_2001 } from "../../server/metallurgy/liquidus";
import { metallurgicalLengthM, moldDwellMin, senPortVelocityMPerS, shellThicknessMm, slabWeightT, throughputTPerMin } from "../../server/metallurgy/casting";
import { embrFieldT, hartmannNumber, magneticReynolds, stuartNumber } from "../../server/metallurgy/embr";

describe("liquidus and superheat", () => {
  it("when the chemistry is given, then Won & Thomas 2001 Table I gives 1536 − (78 C + 7.6 Si + 4.9 Mn + 34.4 P + 38 S)", () => {
    // Won & Thomas 2001, Metall. Mater. Trans. A 32A:1755, Table I; worked by hand for a peritectic grade:
    // 1536 − (9.36 + 1.52 + 4.41 + 0.516 + 0.304) = 1536 − 16.11 = 1519.89 °C
    expect(liquidusC({ c: 0.12, si: 0.2, mn: 0.9, p: 0.015, s: 0.008 })).toBeCloseTo(1519.89, 6);
    // An element the formula does not name (Al) changes nothing.
    expect(liquidusC({ c: 0.12, si: 0.2, mn: 0.9, p: 0.015, s: 0.008, al: 0.04 })).toBeCloseTo(1519.89, 6);
  });

  it("when the steel is (almost) pure iron, then the liquidus is near iron's melting point of 1538 °C", () => {
    // Handbook value: pure iron melts at 1538 °C. The formula's constant is 1536 — a sanity check, not an exact match.
    expect(Math.abs(liquidusC({}) - 1538)).toBeLessThanOrEqual(2);
    expect(WON_THOMAS_2001.baseC).toBe(1536);
  });

  it("when the plant sets its own coefficients, then they are used", () => {
    const extended = { baseC: 1537, perPct: { c: 88, si: 8, mn: 5, p: 30, s: 25, cu: 5, ni: 4, cr: 1.5 } };
    // 1537 − (88·0.1 + 8·0.2 + 5·1 + 30·0.01 + 25·0.01 + 5·0.1 + 4·0.1 + 1.5·0.2) = 1537 − 17.15
    expect(liquidusC({ c: 0.1, si: 0.2, mn: 1, p: 0.01, s: 0.01, cu: 0.1, ni: 0.1, cr: 0.2 }, extended)).toBeCloseTo(1519.85, 6);
  });

  it("when tundish temperature and liquidus are known, then superheat is their difference", () => {
    expect(superheatC(1545, 1519.9)).toBeCloseTo(25.1, 9);
  });
});

describe("casting geometry and shell", () => {
  it("when a 10 m × 1.5 m × 0.23 m slab is weighed at 7.8 t/m³, then it is 26.91 t", () => {
    // geometry × density, computed by hand: 10 · 1.5 · 0.23 · 7.8 = 26.91
    expect(slabWeightT(10_000, 1500, 230)).toBeCloseTo(26.91, 9);
  });

  it("when 1.6 m × 0.25 m is cast, then a heat of 250 t makes about 80 m of strand (DOMAIN.md §1)", () => {
    // ≈ 3 t per metre; 250 t / 3.12 t/m ≈ 80 m
    const tPerM = throughputTPerMin(1, 1600, 250);
    expect(tPerM).toBeCloseTo(3.12, 9);
    expect(250 / tPerM).toBeGreaterThan(78);
    expect(250 / tPerM).toBeLessThan(82);
  });

  it("when D = 230 mm, K = 27 mm/√min and v = 1.5 m/min, then the metallurgical length is about 27 m", () => {
    // DOMAIN.md §4, computed: 1.5 · (230 / 54)² = 27.21 m
    expect(metallurgicalLengthM(1.5, 230, 27)).toBeCloseTo(27.21, 2);
  });

  it("when a point spends 0.8 m / 1.6 m/min = 0.5 min in the mold, then K = 20 gives a shell of 14.1 mm", () => {
    // K ≈ 20 mm/√min in the mold (Britannica, casting of steel); 20 · √0.5 = 14.142
    const t = moldDwellMin(800, 1.6);
    expect(t).toBeCloseTo(0.5, 12);
    expect(shellThicknessMm(20, t)).toBeCloseTo(14.142, 3);
  });

  it("when the SEN port velocity is computed, then it is the liquid volume flow over the port area", () => {
    // 7.8 · 1.5 · 1.5 · 0.23 = 4.0365 t/min solid → /60 /7.0 = 0.0096107 m³/s over 2 × 6400 mm² = 0.0128 m²
    expect(senPortVelocityMPerS(1.5, 1500, 230, 6400, 2)).toBeCloseTo(0.750837, 5);
  });
});

describe("electromagnetic brake numbers", () => {
  const L = 0.115; // half of a 230 mm slab, m

  it("when B = 0.3 T, L = 0.115 m, U = 1 m/s, then N ≈ 1.1 and Ha ≈ 370 (DOMAIN.md §4)", () => {
    // σ = 7.14e5 S/m, ρ = 7000 kg/m³, μ = 0.0063 Pa·s (values used across the EMBr literature, recalled)
    // N = 7.14e5 · 0.09 · 0.115 / 7000 = 1.0557; Ha = 0.3 · 0.115 · √(7.14e5 / 0.0063) = 367.3
    expect(stuartNumber(0.3, L, 1)).toBeCloseTo(1.0557, 4);
    expect(hartmannNumber(0.3, L)).toBeCloseTo(367.28, 1);
  });

  it("when the field doubles, then the interaction number quadruples (Lorentz force ∝ B²)", () => {
    expect(stuartNumber(0.6, L, 1) / stuartNumber(0.3, L, 1)).toBeCloseTo(4, 12);
  });

  it("when U = 1 m/s and L = 0.115 m, then the magnetic Reynolds number is about 0.1, far below 1", () => {
    // μ₀ σ U L = 4π·10⁻⁷ · 7.14e5 · 1 · 0.115 = 0.10318
    const rm = magneticReynolds(1, L);
    expect(rm).toBeCloseTo(0.10318, 4);
    expect(rm).toBeLessThan(1);
  });

  it("when the calibration is linear, then B = offset + slope · I, never negative", () => {
    expect(embrFieldT(400, { kind: "linear", teslaPerAmp: 0.00075, offsetT: 0 })).toBeCloseTo(0.3, 12);
    expect(embrFieldT(0, { kind: "linear", teslaPerAmp: 0.00075, offsetT: -0.01 })).toBe(0);
  });

  it("when the calibration is a table, then B is interpolated between points and held flat beyond them", () => {
    const table = {
      kind: "table" as const,
      points: [
        [0, 0],
        [200, 0.15],
        [400, 0.28],
        [600, 0.36],
      ] as [number, number][],
    };
    expect(embrFieldT(300, table)).toBeCloseTo(0.215, 12);
    expect(embrFieldT(200, table)).toBeCloseTo(0.15, 12);
    expect(embrFieldT(900, table)).toBeCloseTo(0.36, 12);
  });
});
