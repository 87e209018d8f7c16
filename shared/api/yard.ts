import { z } from "zod";
import { catalogueSchema, defectSchema } from "./defects";

/**
 * What a yard tablet keeps for the coming shifts (GET /api/yard/sync): the slabs it may meet, the
 * defect catalogue and the inspector's own recent entries.
 *
 * "Uninspected": the product records an inspection only as a defect entry (a slab's disposition is
 * the worst of its live entries), and a rolled slab has a coil or plate in products. A slab is
 * uninspected while it has no live (not deleted) entry at any stage and has not been rolled. A clean
 * slab therefore stays uninspected until it is rolled: nothing records "inspected, nothing found".
 */

/** Default of the plant setting: slabs cast in the last N hours go to the tablets. */
export const YARD_WINDOW_DEFAULT_HOURS = 48;
export const YARD_WINDOW_MAX_HOURS = 14 * 24;
/** Uninspected slabs older than this are not looked for: that old, they are the office's question, not the yard's. */
export const YARD_UNINSPECTED_MAX_DAYS = 90;
/** At most this many slabs per answer, newest first; the rest are counted. */
export const YARD_SYNC_MAX_SLABS = 5_000;
/** The inspector's own entries of the last days, at most this many. */
export const YARD_MINE_DAYS = 7;
export const YARD_MINE_MAX = 500;

export const yardSettingsSchema = z.object({
  syncWindowHours: z
    .number({ error: "Give a whole number of hours." })
    .int("Give a whole number of hours.")
    .min(1, "At least 1 hour.")
    .max(YARD_WINDOW_MAX_HOURS, `At most ${YARD_WINDOW_MAX_HOURS} hours (14 days).`),
});
export type YardSettings = z.infer<typeof yardSettingsSchema>;

export const yardProductSchema = z.object({
  productId: z.string(),
  /** coil | plate */
  kind: z.string(),
  rolledAt: z.string().nullable(),
});
export type YardProduct = z.infer<typeof yardProductSchema>;

export const yardSlabSchema = z.object({
  slabId: z.string(),
  heatNo: z.string(),
  gradeCode: z.string(),
  strandNo: z.number().int(),
  /** Order of the piece within its heat and strand, from 1. */
  pieceNo: z.number().int(),
  lengthMm: z.number(),
  widthMm: z.number(),
  thicknessMm: z.number(),
  weightT: z.number(),
  castAt: z.string().nullable(),
  transition: z.boolean(),
  disposition: z.string().nullable(),
  /** Live entries on record, any stage. */
  defects: z.number().int(),
  /** No live entry and not rolled (see the header). */
  uninspected: z.boolean(),
  /** Coils or plates rolled from it; empty while it has not been rolled. */
  products: z.array(yardProductSchema),
  /** The next piece of the same heat on the same strand; null after the last one. */
  nextPieceId: z.string().nullable(),
  /**
   * The highest risk under the plant's active risk models (issue 15), for the "check first" order;
   * null when no model is switched on or the slab is not scored. Orders the work, never clears a slab.
   */
  risk: z
    .object({
      risk: z.number(),
      band: z.enum(["high", "raised", "usual"]),
      /** The defect type or category the model predicts. */
      target: z.string(),
      modelVersion: z.number().int(),
      /** The conditions that raise it most, in words. */
      reasons: z.array(z.string()),
      /** Where that defect usually sits on a slab, from the plant's history ("inner radius (top) face, head third"). */
      usualPlace: z.string().nullable(),
    })
    .nullable()
    .default(null),
});
export type YardSlab = z.infer<typeof yardSlabSchema>;

export const yardSyncSchema = z.object({
  windowHours: z.number().int(),
  uninspectedMaxDays: z.number().int(),
  /** Newest first, at most YARD_SYNC_MAX_SLABS. */
  slabs: z.array(yardSlabSchema),
  /** Slabs that matched (cast in the window, or uninspected), and how many of them were left out by the cap. */
  matched: z.number().int(),
  leftOut: z.number().int(),
  catalogue: catalogueSchema,
  mineDays: z.number().int(),
  /** The caller's own entries of the last `mineDays` days, newest first. */
  mine: z.array(defectSchema),
});
export type YardSync = z.infer<typeof yardSyncSchema>;

export const yardSlabParamsSchema = z.object({ slabId: z.string().trim().min(1).max(40) });
