/**
 * Liquidus temperature of steel from its chemistry, T_L = T0 − Σ kᵢ·wᵢ (wt %, °C).
 * Default coefficients: Won & Thomas 2001, Metall. Mater. Trans. A 32A:1755, Table I:
 * T_L = 1536 − (78.0 C + 7.6 Si + 4.9 Mn + 34.4 P + 38.0 S). Plants with an extended formula
 * (Cu, Ni, Cr, Mo, Ti, Al…) set their own coefficients in the plant settings.
 */
export const CHEMISTRY_ELEMENTS = ["c", "si", "mn", "p", "s", "al", "cu", "ni", "cr", "mo", "ti", "nb", "v"] as const;
export type Element = (typeof CHEMISTRY_ELEMENTS)[number];
export type Chemistry = Partial<Record<Element, number | null>>;

export interface LiquidusCoefficients {
  baseC: number;
  perPct: Partial<Record<Element, number>>;
}

export const WON_THOMAS_2001: LiquidusCoefficients = {
  baseC: 1536,
  perPct: { c: 78.0, si: 7.6, mn: 4.9, p: 34.4, s: 38.0 },
};

/** Missing elements count as zero, as the formula is written for the elements it names. */
export function liquidusC(chem: Chemistry, coeff: LiquidusCoefficients = WON_THOMAS_2001): number {
  let drop = 0;
  for (const [el, k] of Object.entries(coeff.perPct) as [Element, number][]) {
    drop += k * (chem[el] ?? 0);
  }
  return coeff.baseC - drop;
}

export function superheatC(tundishTempC: number, liquidus: number): number {
  return tundishTempC - liquidus;
}
