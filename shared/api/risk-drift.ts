import { z } from "zod";

/**
 * Drift of a risk model (issue 15): month by month, on the judged slabs cast after the slabs it was
 * trained and validated on, the risk it predicted against the share that carried the defect
 * (calibration-in-the-large) and how well it still ranks them (AUC). A drifting model is retrained;
 * a risk still only orders the inspection work and never clears a slab.
 */

/** A month is judged only with at least this many judged slabs … */
export const DRIFT_MIN_SLABS = 200;
/** … and this many of them with the defect (fewer cannot tell drift from chance). */
export const DRIFT_MIN_AFFECTED = 10;
/** Predicted odds off by more than half again (a factor 1.5 either way) count as drift: |CITL| > ln 1.5. */
export const DRIFT_ODDS_FACTOR = 1.5;
export const DRIFT_CITL_LIMIT = Math.log(DRIFT_ODDS_FACTOR);
export const DRIFT_CONFIDENCE = 0.95;

export const riskDriftMonthSchema = z.object({
  /** YYYY-MM (UTC) of the slabs' cast time. */
  month: z.string(),
  slabs: z.number().int(),
  affected: z.number().int(),
  /** Mean predicted risk of the month's slabs. */
  predicted: z.number(),
  /** Share of the month's slabs that carried the defect. */
  observed: z.number(),
  /** Calibration-in-the-large (logit scale): 0 when the predicted rate is right on average; above 0: more defects than predicted. */
  citl: z.number().nullable(),
  citlCiLower: z.number().nullable(),
  citlCiUpper: z.number().nullable(),
  /** Why the calibration-in-the-large is missing, in words (null when it was computed). */
  citlReason: z.string().nullable(),
  auc: z.number().nullable(),
  aucCiLower: z.number().nullable(),
  aucCiUpper: z.number().nullable(),
  /** Why the AUC or its interval is missing, in words (null when computed). */
  aucReason: z.string().nullable(),
  /** Enough slabs and affected slabs to judge the month. */
  judged: z.boolean(),
  drifted: z.boolean(),
  /** The month is still running: its figures change as slabs are judged (stored, not e-mailed before it can be judged). */
  provisional: z.boolean(),
  /** In words: why the month counts as drifted, why it could not be judged, or that it lies within the limits. */
  reason: z.string(),
  /** When the quality engineers were e-mailed about this month (null: not e-mailed). */
  alertedAt: z.string().nullable(),
  /** When the daily check last stored this month (null: not yet checked). */
  checkedAt: z.string().nullable(),
});
export type RiskDriftMonth = z.infer<typeof riskDriftMonthSchema>;

export const riskDriftSchema = z.object({
  modelId: z.number().int(),
  target: z.string(),
  version: z.number().int(),
  active: z.boolean(),
  /** The slabs checked were cast after this moment (the newest slab the version was trained or tested on). */
  since: z.string(),
  method: z.string(),
  thresholds: z.object({
    minSlabs: z.number().int(),
    minAffected: z.number().int(),
    /** Odds factor: |CITL| must exceed ln of it. */
    oddsFactor: z.number(),
    citlLimit: z.number(),
    confidence: z.number(),
    /** The version's own validation AUC interval's lower end: a month whose AUC interval lies wholly below it has drifted (null: no validation AUC). */
    validationAucCiLower: z.number().nullable(),
  }),
  months: z.array(riskDriftMonthSchema),
  /** Judged slabs checked in all (every month). */
  slabs: z.number().int(),
  caution: z.string(),
});
export type RiskDrift = z.infer<typeof riskDriftSchema>;
