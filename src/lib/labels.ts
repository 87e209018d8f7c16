import { DISPOSITION_LABELS, FACE_LABELS, STAGE_LABELS, type Disposition, type Face, type Stage } from "@shared/domain";

/** Codes are stored, labels are shown; an unknown code shows as it is. */
export const dispositionLabel = (d: string | null | undefined) => (d ? (DISPOSITION_LABELS[d as Disposition] ?? d) : "—");
export const faceLabel = (f: string) => FACE_LABELS[f as Face] ?? f;
export const stageLabel = (s: string) => STAGE_LABELS[s as Stage] ?? s;

const REVIEW_LABELS: Record<string, string> = {
  new: "Awaiting review",
  confirmed: "Confirmed",
  corrected: "Corrected",
  rejected: "Rejected",
};
export const reviewLabel = (r: string) => REVIEW_LABELS[r] ?? r;
