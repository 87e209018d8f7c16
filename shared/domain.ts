import { z } from "zod";

/**
 * The fixed vocabularies of a defect record (DOMAIN.md §3). Codes are stored; labels are shown.
 * A curved caster's broad faces are its inner-radius (top) and outer-radius (bottom) sides;
 * "left" and "right" narrow faces are seen looking from the head end with the inner face up.
 */
export const FACES = ["inner", "outer", "left", "right", "section"] as const;
export const faceSchema = z.enum(FACES);
export type Face = z.infer<typeof faceSchema>;
export const FACE_LABELS: Record<Face, string> = {
  inner: "Inner radius (top) face",
  outer: "Outer radius (bottom) face",
  left: "Left narrow face",
  right: "Right narrow face",
  section: "Cross-section (sulphur print / macro-etch)",
};

export const SEVERITIES = [1, 2, 3, 4] as const;
export const severitySchema = z.union([z.literal(1), z.literal(2), z.literal(3), z.literal(4)]);
export type Severity = z.infer<typeof severitySchema>;
export const SEVERITY_LABELS: Record<Severity, string> = {
  1: "Minor",
  2: "Moderate",
  3: "Major",
  4: "Critical",
};

export const STAGES = ["slab_yard", "after_scarfing", "hot_mill", "cold_mill", "customer"] as const;
export const stageSchema = z.enum(STAGES);
export type Stage = z.infer<typeof stageSchema>;
export const STAGE_LABELS: Record<Stage, string> = {
  slab_yard: "Slab yard",
  after_scarfing: "After scarfing",
  hot_mill: "Hot mill",
  cold_mill: "Cold mill",
  customer: "Customer",
};

export const DISPOSITIONS = ["accept", "scarf", "grind", "downgrade", "hold", "scrap"] as const;
export const dispositionSchema = z.enum(DISPOSITIONS);
export type Disposition = z.infer<typeof dispositionSchema>;
export const DISPOSITION_LABELS: Record<Disposition, string> = {
  accept: "Accept as is",
  scarf: "Condition by scarfing",
  grind: "Condition by grinding",
  downgrade: "Downgrade",
  hold: "Hold for decision",
  scrap: "Scrap",
};
/** Worse dispositions rank higher; a slab takes the worst of its defects'. */
export const DISPOSITION_RANK: Record<Disposition, number> = {
  accept: 0,
  scarf: 1,
  grind: 2,
  downgrade: 3,
  hold: 4,
  scrap: 5,
};

export const REVIEW_STATUSES = ["new", "confirmed", "corrected", "rejected"] as const;
export type ReviewStatus = (typeof REVIEW_STATUSES)[number];

export const CAUSE_CONFIDENCES = ["suspected", "probable", "confirmed"] as const;
export type CauseConfidence = (typeof CAUSE_CONFIDENCES)[number];

export const CLAIM_STATUSES = ["new", "under_review", "accepted", "rejected", "closed"] as const;
export type ClaimStatus = (typeof CLAIM_STATUSES)[number];
