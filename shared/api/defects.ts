import { z } from "zod";
import { CAUSE_CONFIDENCES, dispositionSchema, faceSchema, REVIEW_STATUSES, severitySchema, stageSchema } from "../domain";

/** Upper bounds that no slab reaches; the server also checks the position against the slab itself. */
const mm = (max: number) => z.number({ error: "Give a number in millimetres." }).min(0, "Use a positive number.").max(max);

/**
 * A new defect, as the yard tablet sends it. `client_key` is made on the device when the entry is
 * created, so an entry sent twice (patchy Wi-Fi, a retry from the offline queue) is stored once.
 * `found_at` is when the inspector made the entry (it may reach the server later).
 */
export const defectCreateSchema = z.object({
  slab_id: z.string().trim().min(1, "Give the slab id.").max(40),
  type_code: z.string().trim().min(1, "Choose the defect type.").max(16),
  face: faceSchema,
  position_along_mm: mm(30_000),
  position_across_mm: mm(5_000),
  length_mm: mm(30_000).nullable().optional(),
  width_mm: mm(5_000).nullable().optional(),
  depth_mm: mm(600).nullable().optional(),
  severity: severitySchema,
  stage: stageSchema.default("slab_yard"),
  disposition: dispositionSchema,
  note: z.string().trim().max(2000).nullable().optional(),
  client_key: z
    .string()
    .min(8)
    .max(64)
    .regex(/^[A-Za-z0-9_-]+$/, "client_key: letters, digits, - and _ only."),
  found_at: z.iso.datetime({ offset: true }).optional(),
});
export type DefectCreate = z.input<typeof defectCreateSchema>;

/**
 * Changes to a defect: any of the describing fields (not the slab, not the key). Without the
 * create schema's defaults: `.partial()` keeps them, and a change of the note alone would put the
 * stage back to slab_yard.
 */
export const defectUpdateSchema = defectCreateSchema
  .omit({ slab_id: true, client_key: true, found_at: true })
  .extend({ stage: stageSchema })
  .partial()
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });
export type DefectUpdate = z.input<typeof defectUpdateSchema>;

export const reviewStatusSchema = z.enum(REVIEW_STATUSES);

export const defectReviewSchema = z
  .object({
    decision: z.enum(["confirm", "correct", "reject"]),
    type_code: z.string().trim().min(1).max(16).optional(),
    severity: severitySchema.optional(),
    note: z.string().trim().max(2000).optional(),
  })
  .refine((v) => v.decision !== "correct" || v.type_code !== undefined || v.severity !== undefined, {
    message: "A correction changes the type or the severity.",
    path: ["decision"],
  })
  .refine((v) => v.decision !== "reject" || (v.note && v.note.length > 0), {
    message: "Say why the entry is rejected.",
    path: ["note"],
  });
export type DefectReview = z.infer<typeof defectReviewSchema>;

export const photoSchema = z.object({
  id: z.string(),
  url: z.string(),
  thumbUrl: z.string(),
  width: z.number().int(),
  height: z.number().int(),
  createdAt: z.string(),
});
export type Photo = z.infer<typeof photoSchema>;

/** A live cause tagging as lists show it (the full history: GET /api/defects/:id/causes). */
export const defectCauseBriefSchema = z.object({
  tag: z.string(),
  tagName: z.string(),
  confidence: z.enum(CAUSE_CONFIDENCES),
});

export const defectSchema = z.object({
  id: z.number().int(),
  slabId: z.string(),
  heatNo: z.string(),
  gradeCode: z.string(),
  strandNo: z.number().int(),
  slabLengthMm: z.number(),
  slabWidthMm: z.number(),
  slabThicknessMm: z.number(),
  typeCode: z.string(),
  typeName: z.string(),
  categoryCode: z.string(),
  face: z.string(),
  positionAlongMm: z.number().nullable(),
  positionAcrossMm: z.number().nullable(),
  lengthMm: z.number().nullable(),
  widthMm: z.number().nullable(),
  depthMm: z.number().nullable(),
  severity: z.number().int(),
  stage: z.string(),
  disposition: z.string(),
  note: z.string().nullable(),
  reviewStatus: reviewStatusSchema,
  reviewedByName: z.string().nullable(),
  reviewedAt: z.string().nullable(),
  /** Why a quality engineer corrected or rejected the entry. */
  reviewNote: z.string().nullable(),
  clientKey: z.string().nullable(),
  foundAt: z.string(),
  createdAt: z.string(),
  updatedAt: z.string(),
  createdById: z.string().nullable(),
  createdByName: z.string().nullable(),
  photos: z.array(photoSchema),
  /** The live causes; empty for callers whose role does not read causes (causes.read). */
  causes: z.array(defectCauseBriefSchema),
  /** Whether the caller may still change or delete it (own and not yet reviewed, or quality). */
  canEdit: z.boolean(),
});
export type Defect = z.infer<typeof defectSchema>;

export const defectCreatedSchema = z.object({
  id: z.number().int(),
  /** false when this client_key was stored before: the same entry, not a new one. */
  created: z.boolean(),
  defect: defectSchema,
});

export const defectListQuerySchema = z.object({
  /** Only the caller's own entries. */
  mine: z
    .enum(["true", "false"])
    .optional()
    .transform((v) => v === "true"),
  /** Entries found from this day (YYYY-MM-DD, UTC) … */
  from: z.string().trim().max(40).optional(),
  to: z.string().trim().max(40).optional(),
  slab: z.string().trim().max(40).optional(),
  heat: z.string().trim().max(40).optional(),
  type: z.string().trim().max(16).optional(),
  reviewStatus: reviewStatusSchema.optional(),
  /** Only entries of at least this severity (1–4). */
  minSeverity: z.coerce.number().int().min(1, "The least severity is 1 to 4.").max(4, "The least severity is 1 to 4.").optional(),
  /**
   * "none": only entries without a live cause tagging, rejected entries left out (they need no
   * cause) — the process engineer's tagging worklist. "any": only entries with at least one.
   */
  causes: z.enum(["none", "any"], { error: "causes is none or any." }).optional(),
  /** By the time found; "severity": the most severe first, the oldest first within a severity. */
  sort: z.enum(["newest", "oldest", "severity"]).default("newest"),
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
});
export type DefectListQuery = z.input<typeof defectListQuerySchema>;

export const defectListSchema = z.object({
  items: z.array(defectSchema),
  total: z.number().int(),
  page: z.number().int(),
  pageSize: z.number().int(),
});

export type DefectList = z.infer<typeof defectListSchema>;

export const photosUploadedSchema = z.object({ photos: z.array(photoSchema) });

// ---------------------------------------------------------------------------------------------
// Catalogue
// ---------------------------------------------------------------------------------------------

export const defectTypeSchema = z.object({
  code: z.string(),
  name: z.string(),
  categoryCode: z.string(),
  categoryName: z.string(),
  description: z.string().nullable(),
  active: z.boolean(),
  /** When the caller last logged this type (for "recently used first"). */
  lastUsedByMeAt: z.string().nullable(),
});
export type DefectType = z.infer<typeof defectTypeSchema>;

export const defectCategorySchema = z.object({
  code: z.string(),
  name: z.string(),
  sortOrder: z.number().int(),
  active: z.boolean(),
});

export const catalogueSchema = z.object({
  types: z.array(defectTypeSchema),
  categories: z.array(defectCategorySchema),
});

const code = (max: number) =>
  z
    .string()
    .trim()
    .min(1)
    .max(max)
    .regex(/^[A-Za-z0-9_-]+$/, "Use letters, digits, - and _ only.");

export const defectTypeInputSchema = z.object({
  code: code(16),
  name: z.string().trim().min(1).max(120),
  categoryCode: code(16),
  description: z.string().trim().max(500).nullable().default(null),
});
// The update schemas restate the fields that have a default on create: `.partial()` keeps defaults,
// so every change would otherwise also clear the description or reset the sort order.
export const defectTypeUpdateSchema = defectTypeInputSchema
  .omit({ code: true })
  .extend({ description: z.string().trim().max(500).nullable(), active: z.boolean() })
  .partial()
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });

export const defectCategoryInputSchema = z.object({
  code: code(16),
  name: z.string().trim().min(1).max(120),
  sortOrder: z.number().int().min(0).max(999).default(0),
});
export const defectCategoryUpdateSchema = defectCategoryInputSchema
  .omit({ code: true })
  .extend({ sortOrder: z.number().int().min(0).max(999), active: z.boolean() })
  .partial()
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });

/** Photo limits the server applies; the client says them before upload. */
export const PHOTO_MAX_BYTES = 25 * 1024 * 1024;
export const PHOTO_MAX_FILES = 10;
/** Live photos one defect entry keeps. */
export const PHOTO_MAX_PER_DEFECT = 30;
/** Photos one person may add in an hour (deleted ones count too). */
export const PHOTO_MAX_PER_USER_HOUR = 300;
export const PHOTO_ACCEPT = "image/jpeg,image/png,image/webp";
