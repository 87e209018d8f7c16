/**
 * Casting formulas of DOMAIN.md §4, pure and in SI-ish plant units (mm, m/min, t, °C).
 * Sources: slab weight and throughput are geometry × density; shell growth s = K·√t is the classic
 * square-root law (K ≈ 20 mm/√min in the mold, Britannica "casting of steel"; 25–30 mm/√min along a
 * slab strand, a recalled range that the plant sets).
 */

/** Slab mass in tonnes: L · W · T · ρ, with dimensions in mm and ρ in t/m³. */
export function slabWeightT(lengthMm: number, widthMm: number, thicknessMm: number, densityTPerM3 = 7.8): number {
  return (lengthMm / 1000) * (widthMm / 1000) * (thicknessMm / 1000) * densityTPerM3;
}

/** Strand throughput in t/min: ρ · v · W · T. */
export function throughputTPerMin(castingSpeedMPerMin: number, widthMm: number, thicknessMm: number, densityTPerM3 = 7.8): number {
  return densityTPerM3 * castingSpeedMPerMin * (widthMm / 1000) * (thicknessMm / 1000);
}

/** Time a point of the strand spends in the mold, minutes: effective mold length / casting speed. */
export function moldDwellMin(moldEffectiveLengthMm: number, castingSpeedMPerMin: number): number {
  return moldEffectiveLengthMm / 1000 / castingSpeedMPerMin;
}

/** Shell thickness after t minutes of solidification, mm: s = K · √t. */
export function shellThicknessMm(kMmPerSqrtMin: number, minutes: number): number {
  return kMmPerSqrtMin * Math.sqrt(minutes);
}

/**
 * Metallurgical length in m: the strand length at which the two shells meet, s = D/2 at
 * t = (D / 2K)², so L_met = v · (D / 2K)².
 */
export function metallurgicalLengthM(castingSpeedMPerMin: number, thicknessMm: number, kMmPerSqrtMin: number): number {
  return castingSpeedMPerMin * (thicknessMm / (2 * kMmPerSqrtMin)) ** 2;
}

/**
 * Mean outlet velocity of the SEN ports, m/s: the liquid volume flow (solid mass flow / liquid density)
 * divided by the total port area.
 */
export function senPortVelocityMPerS(
  castingSpeedMPerMin: number,
  widthMm: number,
  thicknessMm: number,
  portAreaMm2: number,
  portCount: number,
  solidDensity = 7.8,
  liquidDensity = 7.0,
): number {
  const massFlowTPerS = throughputTPerMin(castingSpeedMPerMin, widthMm, thicknessMm, solidDensity) / 60;
  const volumeFlowM3PerS = massFlowTPerS / liquidDensity;
  return volumeFlowM3PerS / ((portAreaMm2 * portCount) / 1e6);
}
