/**
 * Electromagnetic brake numbers (DOMAIN.md §4). Liquid-steel properties recalled as used across the
 * EMBr literature: σ ≈ 7.14×10⁵ S/m, ρ ≈ 7000 kg/m³, μ ≈ 0.0063 Pa·s; the plant can set its own.
 */
/**
 * EMBr calibration from coil current to field at the brake's centre, machine-specific:
 * `{ kind: "linear", teslaPerAmp, offsetT }` or `{ kind: "table", points: [[amps, tesla], …] }`.
 * Stored as JSON on the strand (server/db/schema.ts re-exports this type).
 */
export type EmbrCalibration = { kind: "linear"; teslaPerAmp: number; offsetT: number } | { kind: "table"; points: [number, number][] };

export interface SteelProperties {
  conductivitySPerM: number;
  densityKgPerM3: number;
  viscosityPaS: number;
}

export const LIQUID_STEEL: SteelProperties = { conductivitySPerM: 7.14e5, densityKgPerM3: 7000, viscosityPaS: 0.0063 };
export const MU0 = 4e-7 * Math.PI;

/**
 * Field at the brake in tesla from the coil current, through the strand's calibration: a straight line,
 * or linear interpolation in a measured table (held flat beyond its ends — no extrapolation).
 */
export function embrFieldT(currentA: number, cal: EmbrCalibration): number {
  if (cal.kind === "linear") return Math.max(0, cal.offsetT + cal.teslaPerAmp * currentA);
  const pts = [...cal.points].sort((a, b) => a[0] - b[0]);
  if (pts.length === 0) return 0;
  if (currentA <= pts[0]![0]) return pts[0]![1];
  for (let i = 1; i < pts.length; i++) {
    const [a1, t1] = pts[i]!;
    if (currentA <= a1) {
      const [a0, t0] = pts[i - 1]!;
      return t0 + ((t1 - t0) * (currentA - a0)) / (a1 - a0);
    }
  }
  return pts[pts.length - 1]![1];
}

/** Interaction (Stuart) number N = σ B² L / (ρ U): Lorentz braking against inertia. */
export function stuartNumber(fieldT: number, lengthM: number, velocityMPerS: number, p: SteelProperties = LIQUID_STEEL): number {
  return (p.conductivitySPerM * fieldT ** 2 * lengthM) / (p.densityKgPerM3 * velocityMPerS);
}

/** Hartmann number Ha = B L √(σ/μ): Lorentz against viscous forces. */
export function hartmannNumber(fieldT: number, lengthM: number, p: SteelProperties = LIQUID_STEEL): number {
  return fieldT * lengthM * Math.sqrt(p.conductivitySPerM / p.viscosityPaS);
}

/** Magnetic Reynolds number Rm = μ₀ σ U L; far below 1, the flow does not disturb the applied field. */
export function magneticReynolds(velocityMPerS: number, lengthM: number, p: SteelProperties = LIQUID_STEEL): number {
  return MU0 * p.conductivitySPerM * velocityMPerS * lengthM;
}
