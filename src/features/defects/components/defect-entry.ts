import { defectCreateSchema, type Defect, type DefectCreate, type DefectUpdate } from "@shared/api/defects";
import type { z } from "zod";
import type { Disposition, Face, Severity, Stage } from "@shared/domain";
import { i18n } from "@/i18n";
import { num, parseDecimal } from "@/lib/format";
import { acrossLimit, type PositionValue, type SlabLimits } from "./position-panel";

/** What the inspector has filled in so far; sizes stay text until saved so a half-typed "2," is kept. */
export interface EntryDraft {
  position: PositionValue | null;
  typeCode: string | null;
  severity: Severity | null;
  lengthMm: string;
  widthMm: string;
  depthMm: string;
  stage: Stage;
  disposition: Disposition | null;
  note: string;
}

export type DraftField = "position" | "typeCode" | "severity" | "lengthMm" | "widthMm" | "depthMm" | "stage" | "disposition" | "note";
export type DraftErrors = Partial<Record<DraftField, string>>;

export const emptyDraft = (stage: Stage = "slab_yard"): EntryDraft => ({
  position: null,
  typeCode: null,
  severity: null,
  lengthMm: "",
  widthMm: "",
  depthMm: "",
  stage,
  disposition: null,
  note: "",
});

const text = (n: number | null | undefined) => (n === null || n === undefined ? "" : String(n));

export function draftFromBody(b: DefectCreate): EntryDraft {
  return {
    position: { face: b.face, alongMm: b.position_along_mm, acrossMm: b.position_across_mm },
    typeCode: b.type_code,
    severity: b.severity,
    lengthMm: text(b.length_mm),
    widthMm: text(b.width_mm),
    depthMm: text(b.depth_mm),
    stage: b.stage ?? "slab_yard",
    disposition: b.disposition,
    note: b.note ?? "",
  };
}

export function draftFromDefect(d: Defect): EntryDraft {
  return {
    position: d.positionAlongMm === null ? null : { face: d.face as Face, alongMm: d.positionAlongMm, acrossMm: d.positionAcrossMm ?? 0 },
    typeCode: d.typeCode,
    severity: d.severity as Severity,
    lengthMm: text(d.lengthMm),
    widthMm: text(d.widthMm),
    depthMm: text(d.depthMm),
    stage: d.stage as Stage,
    disposition: d.disposition as Disposition,
    note: d.note ?? "",
  };
}

/** "12", "2,5", "" → 12, 2.5, null (in the language's style, parseDecimal); anything else → NaN (an error to show). */
export function parseSize(s: string): number | null {
  if (!s.trim()) return null;
  const n = parseDecimal(s);
  return Number.isFinite(n) ? n : Number.NaN;
}

const FIELD_OF: Record<string, DraftField> = {
  type_code: "typeCode",
  face: "position",
  position_along_mm: "position",
  position_across_mm: "position",
  length_mm: "lengthMm",
  width_mm: "widthMm",
  depth_mm: "depthMm",
  severity: "severity",
  stage: "stage",
  disposition: "disposition",
  note: "note",
};

/** A check of the shared schema in the language shown: its bounds in words, any other message as it is. */
function issueWords(issue: z.core.$ZodIssue): string {
  if (issue.code === "too_small" && issue.origin === "number") return i18n.t("yard:entry.errors.positive");
  if ((issue.code === "too_big" && issue.origin === "number") || (issue.code === "invalid_type" && issue.expected === "number"))
    return i18n.t("yard:entry.errors.mmNumber");
  if (issue.code === "too_big" && issue.origin === "string") return i18n.t("yard:entry.errors.atMostChars", { max: String(issue.maximum) });
  return issue.message;
}

/**
 * The defect to send, checked against the shared schema and the slab's own size, or the plain
 * words of what is still missing. The order of the errors is the order of the form.
 */
export function buildDefect(
  draft: EntryDraft,
  slab: SlabLimits & { slabId: string },
  clientKey: string,
  foundAt: string,
): { ok: true; body: DefectCreate } | { ok: false; errors: DraftErrors } {
  const errors: DraftErrors = {};
  const p = draft.position;
  if (!p) errors.position = i18n.t("yard:entry.errors.tapDrawing");
  else if (p.alongMm > slab.lengthMm) errors.position = i18n.t("yard:entry.errors.alongMax", { max: num(slab.lengthMm) });
  else if (p.acrossMm > acrossLimit(slab, p.face)) errors.position = i18n.t("yard:entry.errors.acrossMax", { max: num(acrossLimit(slab, p.face)) });
  if (!draft.typeCode) errors.typeCode = i18n.t("yard:entry.errors.type");
  if (!draft.severity) errors.severity = i18n.t("yard:entry.errors.severity");
  if (!draft.disposition) errors.disposition = i18n.t("yard:entry.errors.disposition");
  const sizes = { lengthMm: parseSize(draft.lengthMm), widthMm: parseSize(draft.widthMm), depthMm: parseSize(draft.depthMm) };
  for (const [k, v] of Object.entries(sizes)) if (Number.isNaN(v)) errors[k as DraftField] = i18n.t("yard:entry.errors.size");
  if (Object.keys(errors).length) return { ok: false, errors };

  const candidate = {
    slab_id: slab.slabId,
    type_code: draft.typeCode!,
    face: p!.face,
    position_along_mm: p!.alongMm,
    position_across_mm: p!.acrossMm,
    length_mm: sizes.lengthMm,
    width_mm: sizes.widthMm,
    depth_mm: sizes.depthMm,
    severity: draft.severity!,
    stage: draft.stage,
    disposition: draft.disposition!,
    note: draft.note.trim() ? draft.note.trim() : null,
    client_key: clientKey,
    found_at: foundAt,
  };
  const parsed = defectCreateSchema.safeParse(candidate);
  if (!parsed.success) {
    for (const issue of parsed.error.issues) {
      const field = FIELD_OF[String(issue.path[0])] ?? "note";
      errors[field] ??= issueWords(issue);
    }
    return { ok: false, errors };
  }
  return { ok: true, body: candidate };
}

/** Only what changed, for a PATCH of a defect already on the server. */
export function changesOf(before: Defect, body: DefectCreate): DefectUpdate | null {
  const out: Record<string, unknown> = {};
  const pairs: [keyof DefectCreate, unknown][] = [
    ["type_code", before.typeCode],
    ["face", before.face],
    ["position_along_mm", before.positionAlongMm],
    ["position_across_mm", before.positionAcrossMm],
    ["length_mm", before.lengthMm],
    ["width_mm", before.widthMm],
    ["depth_mm", before.depthMm],
    ["severity", before.severity],
    ["stage", before.stage],
    ["disposition", before.disposition],
    ["note", before.note],
  ];
  for (const [k, old] of pairs) {
    const v = body[k] ?? null;
    if (v !== (old ?? null)) out[k] = v;
  }
  return Object.keys(out).length ? (out as DefectUpdate) : null;
}
