import { z } from "zod";
import { slabRiskBriefSchema } from "./risk";
import { defectCauseBriefSchema } from "./defects";
import { CONDITION_SOURCES } from "../variables";
import { embrCalibrationSchema } from "./plant";

const sourceSchema = z.enum(CONDITION_SOURCES).nullable();
const num = z.number().nullable();

// ---------------------------------------------------------------------------------------------
// Heats list
// ---------------------------------------------------------------------------------------------

export const HEAT_SORT_KEYS = ["castStart", "heatNo", "sequenceNo", "gradeCode", "castingSpeed", "superheat", "slabs", "defects"] as const;

export const heatListQuerySchema = z.object({
  /** Heat number, sequence number or grade code — the start of it. */
  q: z.string().trim().max(40).optional(),
  grade: z.string().trim().max(40).optional(),
  family: z.string().trim().max(40).optional(),
  caster: z.string().trim().max(40).optional(),
  /** ISO dates (YYYY-MM-DD) or date-times; `to` is inclusive of its whole day when a date. */
  from: z.string().trim().max(40).optional(),
  to: z.string().trim().max(40).optional(),
  sort: z.enum(HEAT_SORT_KEYS).default("castStart"),
  dir: z.enum(["asc", "desc"]).default("desc"),
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
});
export type HeatListQuery = z.infer<typeof heatListQuerySchema>;

export const heatRowSchema = z.object({
  heatNo: z.string(),
  sequenceNo: z.string().nullable(),
  sequencePosition: z.number().int().nullable(),
  casterCode: z.string(),
  gradeCode: z.string(),
  familyCode: z.string(),
  castStart: z.string(),
  castEnd: z.string().nullable(),
  castingSpeedMPerMin: num,
  superheatC: num,
  embrCurrentA: num,
  senDepthMm: num,
  slabs: z.number().int(),
  defects: z.number().int(),
  affectedSlabs: z.number().int(),
});
export type HeatRow = z.infer<typeof heatRowSchema>;

export const heatListSchema = z.object({
  items: z.array(heatRowSchema),
  total: z.number().int(),
  page: z.number().int(),
  pageSize: z.number().int(),
});
export type HeatList = z.infer<typeof heatListSchema>;

// ---------------------------------------------------------------------------------------------
// One heat
// ---------------------------------------------------------------------------------------------

export const chemistrySchema = z.object({
  cPct: num,
  siPct: num,
  mnPct: num,
  pPct: num,
  sPct: num,
  alPct: num,
  cuPct: num,
  niPct: num,
  crPct: num,
  moPct: num,
  tiPct: num,
  nbPct: num,
  vPct: num,
  nPpm: num,
});

/** A slab's resolved conditions with the source of each value and the derived values. */
export const resolvedConditionsSchema = z.object({
  castingSpeedMPerMin: num,
  castingSpeedSource: sourceSchema,
  speedMinMPerMin: num,
  speedMaxMPerMin: num,
  speedChangeMPerMin: num,
  superheatC: num,
  superheatSource: sourceSchema,
  embrCurrentA: num,
  embrCurrentSource: sourceSchema,
  senDepthMm: num,
  senDepthSource: sourceSchema,
  argonNlPerMin: num,
  argonSource: sourceSchema,
  moldLevelSdMm: num,
  moldLevelSdSource: sourceSchema,
  sampleCount: z.number().int(),
  throughputTPerMin: num,
  moldDwellMin: num,
  shellExitMm: num,
  metallurgicalLengthM: num,
  embrFieldT: num,
  senPortVelocityMPerS: num,
  stuartNumber: num,
  hartmannNumber: num,
});
export type ResolvedConditions = z.infer<typeof resolvedConditionsSchema>;

export const slabSummarySchema = z.object({
  slabId: z.string(),
  strandNo: z.number().int(),
  pieceNo: z.number().int(),
  lengthMm: z.number(),
  widthMm: z.number(),
  thicknessMm: z.number(),
  weightT: z.number(),
  castLengthStartM: num,
  castAt: z.string().nullable(),
  transition: z.boolean(),
  disposition: z.string().nullable(),
  defects: z.number().int(),
  conditions: resolvedConditionsSchema.nullable(),
  /** The slab's highest risk under the switched-on risk models (band first); null when none is switched on. */
  risk: slabRiskBriefSchema.nullable(),
  /** The names of the live operating-window rules the slab was cast outside of. */
  windowFlags: z.array(z.string()),
});

export const heatDetailSchema = z.object({
  heatNo: z.string(),
  sequenceNo: z.string().nullable(),
  sequencePosition: z.number().int().nullable(),
  sequenceHeats: z.number().int().nullable(),
  previousHeatNo: z.string().nullable(),
  nextHeatNo: z.string().nullable(),
  caster: z.object({ code: z.string(), name: z.string() }),
  grade: z.object({ code: z.string(), name: z.string(), familyCode: z.string(), familyName: z.string() }),
  castStart: z.string(),
  castEnd: z.string().nullable(),
  ladleWeightT: num,
  tundishChange: z.boolean(),
  conditions: z.object({
    castingSpeedMPerMin: num,
    tundishTempC: num,
    liquidusC: num,
    liquidusSource: z.string().nullable(),
    superheatC: num,
    superheatSource: z.string().nullable(),
    embrCurrentA: num,
    senDepthMm: num,
    argonNlPerMin: num,
    moldLevelSdMm: num,
  }),
  chemistry: chemistrySchema,
  /** Heat-level derived values at the heat's own conditions, per strand (width from its slabs). */
  derived: z.array(
    z.object({
      strandNo: z.number().int(),
      widthMm: num,
      throughputTPerMin: num,
      moldDwellMin: num,
      shellExitMm: num,
      metallurgicalLengthM: num,
      embrFieldT: num,
      senPortVelocityMPerS: num,
      stuartNumber: num,
      hartmannNumber: num,
    }),
  ),
  slabs: z.array(slabSummarySchema),
  sampleCount: z.number().int(),
});
export type HeatDetail = z.infer<typeof heatDetailSchema>;

export const heatSamplesQuerySchema = z.object({
  /** At most this many points per strand (evenly thinned). */
  maxPoints: z.coerce.number().int().min(10).max(5000).default(1500),
});

export const heatSamplesSchema = z.object({
  heatNo: z.string(),
  strands: z.array(
    z.object({
      strandNo: z.number().int(),
      total: z.number().int(),
      /** Columns: time (ISO), cast length m, speed m/min, tundish °C, brake A, SEN mm, argon NL/min, mold level mm. */
      points: z.array(z.tuple([z.string(), num, num, num, num, num, num, num])),
    }),
  ),
});
export type HeatSamples = z.infer<typeof heatSamplesSchema>;

// ---------------------------------------------------------------------------------------------
// One slab
// ---------------------------------------------------------------------------------------------

export const slabDefectSchema = z.object({
  id: z.number().int(),
  typeCode: z.string(),
  typeName: z.string(),
  face: z.string(),
  positionAlongMm: num,
  positionAcrossMm: num,
  lengthMm: num,
  widthMm: num,
  depthMm: num,
  severity: z.number().int(),
  stage: z.string(),
  disposition: z.string(),
  reviewStatus: z.string(),
  note: z.string().nullable(),
  foundAt: z.string(),
  photoCount: z.number().int(),
  createdByName: z.string().nullable(),
  causes: z.array(defectCauseBriefSchema),
});
export type SlabDefect = z.infer<typeof slabDefectSchema>;

export const slabDetailSchema = z.object({
  slabId: z.string(),
  heatNo: z.string(),
  gradeCode: z.string(),
  familyCode: z.string(),
  casterCode: z.string(),
  strandNo: z.number().int(),
  pieceNo: z.number().int(),
  lengthMm: z.number(),
  widthMm: z.number(),
  thicknessMm: z.number(),
  weightT: z.number(),
  weightSource: z.string(),
  castLengthStartM: num,
  castAt: z.string().nullable(),
  transition: z.boolean(),
  disposition: z.string().nullable(),
  /** The values imported for the slab itself (null when not given). */
  given: z.object({
    castingSpeedMPerMin: num,
    superheatC: num,
    embrCurrentA: num,
    senDepthMm: num,
    argonNlPerMin: num,
    moldLevelSdMm: num,
  }),
  conditions: resolvedConditionsSchema.nullable(),
  defects: z.array(slabDefectSchema),
  /** Its risk under each switched-on risk model, highest band first (empty when none is switched on). */
  risks: z.array(slabRiskBriefSchema),
  /** The names of the live operating-window rules the slab was cast outside of. */
  windowFlags: z.array(z.string()),
});
export type SlabDetail = z.infer<typeof slabDetailSchema>;

// ---------------------------------------------------------------------------------------------
// Plant setup changes
// ---------------------------------------------------------------------------------------------

export const strandUpdateSchema = z
  .object({
    moldThicknessMm: z.number().min(50).max(600),
    moldWidthMinMm: z.number().min(300).max(4000).nullable(),
    moldWidthMaxMm: z.number().min(300).max(4000).nullable(),
    moldEffectiveLengthMm: z.number().min(300).max(2000),
    senPortAreaMm2: z.number().min(100).max(100_000),
    senPortCount: z.number().int().min(1).max(8),
    embrCalibration: embrCalibrationSchema,
    embrPositionMm: z.number().min(0).max(3000).nullable(),
  })
  .partial()
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });
export type StrandUpdate = z.infer<typeof strandUpdateSchema>;

export const casterCreateSchema = z.object({
  code: z
    .string()
    .trim()
    .min(1)
    .max(16)
    .regex(/^[A-Za-z0-9_-]+$/, "Use letters, digits, - and _ only."),
  name: z.string().trim().min(1).max(120),
  worksName: z.string().trim().min(1).max(120),
  machineType: z.enum(["curved", "vertical-bending", "vertical"]).default("curved"),
  radiusM: z.number().min(1).max(30).nullable().default(null),
  strands: z
    .array(
      z.object({
        strandNo: z.number().int().min(1).max(8),
        moldThicknessMm: z.number().min(50).max(600),
        moldEffectiveLengthMm: z.number().min(300).max(2000),
        senPortAreaMm2: z.number().min(100).max(100_000),
        senPortCount: z.number().int().min(1).max(8).default(2),
        embrCalibration: embrCalibrationSchema,
      }),
    )
    .min(1)
    .max(8),
});
export type CasterCreate = z.infer<typeof casterCreateSchema>;

export const gradeFamilyInputSchema = z.object({
  code: z
    .string()
    .trim()
    .min(1)
    .max(16)
    .regex(/^[A-Za-z0-9_-]+$/, "Use letters, digits, - and _ only."),
  name: z.string().trim().min(1).max(120),
  description: z.string().trim().max(500).nullable().default(null),
});

export const gradeInputSchema = z.object({
  code: z
    .string()
    .trim()
    .min(1)
    .max(32)
    .regex(/^[A-Za-z0-9_.\-/]+$/, "Use letters, digits and - _ . / only."),
  name: z.string().trim().min(1).max(120),
  familyCode: z.string().trim().min(1).max(16),
  active: z.boolean().default(true),
});
/**
 * Changes to a family or a grade. The fields with a default on create are restated without it:
 * `.partial()` keeps defaults, so a rename would otherwise clear the family's description or
 * reactivate a retired grade. An empty change is refused, as everywhere else.
 */
export const gradeFamilyUpdateSchema = gradeFamilyInputSchema
  .omit({ code: true })
  .extend({ description: z.string().trim().max(500).nullable() })
  .partial()
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });
export const gradeUpdateSchema = gradeInputSchema
  .omit({ code: true })
  .extend({ active: z.boolean() })
  .partial()
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });

export const plantSettingsSchema = z.object({
  liquidus: z.object({
    baseC: z.number().min(1400).max(1600),
    perPct: z.partialRecord(z.enum(["c", "si", "mn", "p", "s", "al", "cu", "ni", "cr", "mo", "ti", "nb", "v"]), z.number().min(0).max(200)),
    source: z.string().max(300).optional(),
  }),
  shellK: z.object({
    moldMmPerSqrtMin: z.number().min(5).max(60),
    strandMmPerSqrtMin: z.number().min(5).max(60),
  }),
  density: z.object({
    solidTPerM3: z.number().min(6).max(9),
    liquidTPerM3: z.number().min(6).max(9),
  }),
  steelProperties: z.object({
    conductivitySPerM: z.number().min(1e5).max(5e6),
    densityKgPerM3: z.number().min(6000).max(9000),
    viscosityPaS: z.number().min(0.001).max(0.05),
  }),
});
export type PlantSettings = z.infer<typeof plantSettingsSchema>;
