import { z } from "zod";
import { CAUSE_CONFIDENCES } from "../domain";
import { reportFiltersSchema } from "./reports";

/**
 * The cause taxonomy and the tagging of defects with causes. Process engineers and admins maintain
 * the taxonomy and tag; quality engineers (and claims) read. A tag that was ever used is retired,
 * never deleted, so every old tagging still names its tag.
 */

export const CAUSE_GROUP_CODES = ["process", "equipment", "material", "handling", "measurement"] as const;
export const causeConfidenceSchema = z.enum(CAUSE_CONFIDENCES, { error: "Confidence is suspected, probable or confirmed." });

export const CONFIDENCE_LABELS: Record<(typeof CAUSE_CONFIDENCES)[number], string> = {
  suspected: "Suspected",
  probable: "Probable",
  confirmed: "Confirmed",
};

const tagCode = z
  .string()
  .trim()
  .min(2, "The code needs at least 2 characters.")
  .max(40)
  .regex(/^[a-z0-9]+(-[a-z0-9]+)*$/, "The code uses lower-case letters, digits and single hyphens (e.g. sen-clogging).");

export const causeTagSchema = z.object({
  code: z.string(),
  name: z.string(),
  group: z.string(),
  description: z.string().nullable(),
  retired: z.boolean(),
  /** Live taggings (not removed) that use the tag. */
  uses: z.number().int(),
  /** Whether it was ever used: such a tag can only be retired. */
  everUsed: z.boolean(),
});
export type CauseTag = z.infer<typeof causeTagSchema>;

export const causeGroupSchema = z.object({ code: z.string(), name: z.string(), tags: z.array(causeTagSchema) });
export const causeTaxonomySchema = z.object({ groups: z.array(causeGroupSchema) });
export type CauseTaxonomy = z.infer<typeof causeTaxonomySchema>;

export const causeTagCreateSchema = z.object({
  code: tagCode,
  name: z.string().trim().min(2, "Give the tag a name.").max(80),
  group: z.enum(CAUSE_GROUP_CODES, { error: "The group is process, equipment, material, handling or measurement." }),
  description: z.string().trim().max(500).nullable().optional(),
});
export const causeTagUpdateSchema = causeTagCreateSchema
  .omit({ code: true })
  .partial()
  .extend({ retired: z.boolean().optional() })
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });

export const causeTagQuerySchema = z.object({ includeRetired: z.enum(["true", "false"]).optional() });

/** POST /api/defects/:id/causes */
export const tagDefectSchema = z.object({
  tags: z.array(z.string().trim().min(1).max(40)).min(1, "Choose at least one cause tag.").max(10),
  confidence: causeConfidenceSchema,
  note: z.string().trim().max(1000).nullable().optional(),
});
export type TagDefect = z.input<typeof tagDefectSchema>;

export const untagSchema = z.object({ reason: z.string().trim().max(500).optional() });

const person = z.object({ id: z.string(), name: z.string() }).nullable();

export const defectCauseSchema = z.object({
  id: z.number().int(),
  tag: z.string(),
  tagName: z.string(),
  group: z.string(),
  confidence: causeConfidenceSchema,
  note: z.string().nullable(),
  by: person,
  at: z.string(),
  removedAt: z.string().nullable(),
  removedBy: person,
});
export type DefectCause = z.infer<typeof defectCauseSchema>;

/** The live taggings of a defect, and every tagging it ever had (removed ones included). */
export const defectCausesSchema = z.object({
  defectId: z.number().int(),
  current: z.array(defectCauseSchema),
  history: z.array(defectCauseSchema),
});
export type DefectCauses = z.infer<typeof defectCausesSchema>;

/** Which defects a bulk tagging covers: a heat's, a sequence's, a filter result's, or listed ones. */
export const bulkSelectionSchema = z.discriminatedUnion(
  "kind",
  [
    z.object({ kind: z.literal("heat"), heatNo: z.string().trim().min(1).max(40) }),
    z.object({ kind: z.literal("sequence"), sequenceNo: z.string().trim().min(1).max(40) }),
    z.object({ kind: z.literal("filter"), filters: reportFiltersSchema }),
    z.object({ kind: z.literal("defects"), ids: z.array(z.number().int().positive()).min(1).max(5000) }),
  ],
  { error: "The selection is a heat, a sequence, a filter or a list of defects." },
);

/** POST /api/causes/bulk: the same tags on every selected defect; dryRun counts without writing. */
export const bulkTagSchema = tagDefectSchema.extend({
  selection: bulkSelectionSchema,
  dryRun: z.boolean().optional(),
  /** Defect filters narrowing a heat or sequence selection (e.g. only its SLG defects). */
  defectType: z.array(z.string().trim().min(1).max(16)).max(20).optional(),
});
export type BulkTag = z.input<typeof bulkTagSchema>;

export const bulkTagResultSchema = z.object({
  dryRun: z.boolean(),
  /** Live, unrejected defects in the selection. */
  defects: z.number().int(),
  /** Taggings written (or that would be written). */
  tagged: z.number().int(),
  /** Defect–tag pairs that already carried the same confidence and note. */
  unchanged: z.number().int(),
  /** The first defect ids of the selection, for a preview. */
  sample: z.array(z.object({ id: z.number().int(), slabId: z.string(), type: z.string(), severity: z.number().int() })),
});
export type BulkTagResult = z.infer<typeof bulkTagResultSchema>;

// Cause Pareto (a report): GET /api/reports/cause-pareto?…filters
export const causeParetoQuerySchema = reportFiltersSchema.extend({
  /** Count only taggings at or above this confidence. */
  minConfidence: causeConfidenceSchema.default("suspected"),
});
export const causeParetoSchema = z.object({
  /** Live, unrejected defects passing the filters (the n). */
  defects: z.number().int(),
  tagged: z.number().int(),
  untagged: z.number().int(),
  rows: z.array(
    z.object({
      code: z.string(),
      name: z.string(),
      group: z.string(),
      retired: z.boolean(),
      defects: z.number().int(),
      slabs: z.number().int(),
      suspected: z.number().int(),
      probable: z.number().int(),
      confirmed: z.number().int(),
      /** Share of all taggings counted (0–1): a defect with two causes counts under both, so the shares add to 1. */
      share: z.number(),
      cumulative: z.number(),
    }),
  ),
  notes: z.array(z.string()),
});
export type CausePareto = z.infer<typeof causeParetoSchema>;
