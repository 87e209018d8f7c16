import { z } from "zod";
import { VARIABLES } from "../variables";

/**
 * Slab risk before inspection (issue 15): models trained on the plant's own history rank the slabs
 * not yet inspected. A risk is an association learnt from history, never a cause, and it never
 * clears a slab: every slab is inspected as the plant's procedure requires.
 */

export const RISK_CATEGORY_KEYS = ["grade_family", "strand", "transition", "sequence_position"] as const;
export const RISK_CATEGORY_LABELS: Record<(typeof RISK_CATEGORY_KEYS)[number], string> = {
  grade_family: "Grade family",
  strand: "Strand",
  transition: "Grade transition",
  sequence_position: "Position in the sequence",
};

/**
 * Bands, from the model's own test slabs (the newest slabs it never saw): "high" is a risk among the
 * top 10 % of them, "raised" the next 20 %, "usual" the rest.
 */
export const RISK_BANDS = ["high", "raised", "usual"] as const;
export type RiskBand = (typeof RISK_BANDS)[number];
export const RISK_BAND_LABELS: Record<RiskBand, string> = { high: "High", raised: "Raised", usual: "Usual" };

const conditionKeys = VARIABLES.map((v) => v.key) as [string, ...string[]];

export const trainRiskModelSchema = z
  .object({
    targetKind: z.enum(["type", "category"], { error: "Choose a defect type or a category." }),
    targetCode: z.string().trim().min(1, "Choose what the model predicts.").max(40),
    conditions: z
      .array(z.enum(conditionKeys, { error: "Unknown condition." }))
      .max(20, "At most 20 conditions.")
      .default([]),
    categories: z
      .array(z.enum(RISK_CATEGORY_KEYS, { error: "Unknown category." }))
      .max(4)
      .default(["grade_family"]),
    knots: z.union([z.literal(3), z.literal(4), z.literal(5)]).default(4),
    /** Training window by cast time (ISO dates); open ends: all history / up to today. */
    from: z.iso.date("Give the start as a date.").optional(),
    to: z.iso.date("Give the end as a date.").optional(),
  })
  .refine((b) => b.conditions.length + b.categories.length > 0, { message: "Choose at least one condition or category.", path: ["conditions"] })
  .refine((b) => new Set(b.conditions).size === b.conditions.length, { message: "A condition is chosen twice.", path: ["conditions"] })
  .refine((b) => !b.from || !b.to || b.from <= b.to, { message: "The start is after the end.", path: ["from"] });
export type TrainRiskModelBody = z.input<typeof trainRiskModelSchema>;

export const reliabilityPointSchema = z.object({ predicted: z.number(), observed: z.number(), slabs: z.number().int() });

export const riskValidationSchema = z.object({
  auc: z.number().nullable(),
  aucCiLower: z.number().nullable(),
  aucCiUpper: z.number().nullable(),
  brier: z.number().nullable(),
  calibrationIntercept: z.number().nullable(),
  calibrationSlope: z.number().nullable(),
  captureTop10: z.number().nullable(),
  captureTop20: z.number().nullable(),
  baselineAuc: z.number().nullable(),
  baselineBrier: z.number().nullable(),
  testSlabs: z.number().int(),
  testAffected: z.number().int(),
  trainSlabs: z.number().int(),
  trainAffected: z.number().int(),
  reliability: z.array(reliabilityPointSchema),
  splitAt: z.string().nullable(),
  notes: z.array(z.string()),
});
export type RiskValidation = z.infer<typeof riskValidationSchema>;

export const riskTermSchema = z.object({ column: z.string(), coefficient: z.number() });

export const riskModelSchema = z.object({
  id: z.number().int(),
  targetKind: z.enum(["type", "category"]),
  targetCode: z.string(),
  targetName: z.string(),
  version: z.number().int(),
  status: z.enum(["training", "ready", "failed"]),
  progress: z.number(),
  progressText: z.string().nullable(),
  error: z.string().nullable(),
  conditions: z.array(z.object({ key: z.string(), label: z.string(), unit: z.string().nullable() })),
  categories: z.array(z.object({ key: z.string(), label: z.string() })),
  knots: z.number().int(),
  trainFrom: z.string().nullable(),
  trainTo: z.string().nullable(),
  lambda: z.number().nullable(),
  effectiveDf: z.number().nullable(),
  validation: riskValidationSchema.nullable(),
  /** The risk above which a slab is "high" / "raised" (from the test slabs). */
  bands: z.object({ high: z.number(), raised: z.number() }).nullable(),
  beatsBaseline: z.boolean(),
  active: z.boolean(),
  method: z.string().nullable(),
  terms: z.array(riskTermSchema),
  trainedByName: z.string().nullable(),
  createdAt: z.string(),
  finishedAt: z.string().nullable(),
  activatedAt: z.string().nullable(),
  activatedByName: z.string().nullable(),
});
export type RiskModel = z.infer<typeof riskModelSchema>;

export const riskModelListSchema = z.object({ items: z.array(riskModelSchema.omit({ terms: true })) });
export const riskModelParamsSchema = z.object({ id: z.coerce.number().int().positive("No such model.") });

export const riskReasonSchema = z.object({
  variable: z.string(),
  label: z.string(),
  value: z.union([z.number(), z.string()]).nullable(),
  unit: z.string().nullable(),
  /** Change in log-odds against the plant's typical slab (positive raises the risk). */
  contribution: z.number(),
  /** In words: "Casting speed 1.72 m/min (typical 1.40)". */
  text: z.string(),
});
export type RiskReason = z.infer<typeof riskReasonSchema>;

export const slabRiskSchema = z.object({
  slabId: z.string(),
  heatNo: z.string(),
  castAt: z.string().nullable(),
  risk: z.number(),
  band: z.enum(RISK_BANDS),
  reasons: z.array(riskReasonSchema),
  modelId: z.number().int(),
  modelVersion: z.number().int(),
  target: z.string(),
  uninspected: z.boolean(),
});
export type SlabRisk = z.infer<typeof slabRiskSchema>;

/** A slab's risk under one switched-on model, as its heat and slab pages show it. */
export const slabRiskBriefSchema = z.object({
  /** The defect type or category, in words. */
  target: z.string(),
  modelId: z.number().int(),
  modelVersion: z.number().int(),
  risk: z.number(),
  band: z.enum(RISK_BANDS),
  reasons: z.array(riskReasonSchema),
  /** False: reckoned for this page from the slab's conditions (slabs cast before the model's 90 days are not stored). */
  stored: z.boolean(),
});
export type SlabRiskBrief = z.infer<typeof slabRiskBriefSchema>;

export const riskSlabsQuerySchema = z
  .object({
    defectType: z.string().trim().max(40).optional(),
    from: z.iso.date("Give the start as a date.").optional(),
    to: z.iso.date("Give the end as a date.").optional(),
    uninspected: z.enum(["true", "false"]).optional(),
    band: z.enum(RISK_BANDS).optional(),
    limit: z.coerce.number().int().min(1).max(1000).default(200),
  })
  .refine((q) => !q.from || !q.to || q.from <= q.to, { message: "The start is after the end.", path: ["from"] });

export const riskSlabsSchema = z.object({
  items: z.array(slabRiskSchema),
  /** Slabs matching before the limit. */
  matched: z.number().int(),
  /** The active models the list draws on. */
  models: z.array(z.object({ id: z.number().int(), target: z.string(), version: z.number().int() })),
  caution: z.string(),
});

export const RISK_CAUTION =
  "A risk is an association learnt from the plant's history, not a cause. It orders the work; it never clears a slab: every slab is inspected as the plant's procedure requires, and changes to casting practice go through the plant's procedure.";
