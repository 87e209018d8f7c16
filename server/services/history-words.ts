/**
 * The audit trail of a heat's history said in words: who did what to which record, as a person
 * reading a claim file would say it. Stored internals — row ids, type ids, client keys, photo
 * hashes, raw JSON — never reach the sentence; a record is named by what the plant calls it
 * (the defect type on its slab, the investigation's reference, the claim's number).
 */
import { DISPOSITION_LABELS, FACE_LABELS, type Disposition, type Face } from "@shared/domain";

type Json = Record<string, unknown>;

export interface WordsContext {
  /** A defect's row id → "SLG on slab 24A0012-03". */
  defect: (id: string | null) => string;
  investigation: (id: string | null) => string;
  claim: (id: string | null) => string;
  /** A defect type's row id → its code. */
  typeCode: (id: unknown) => string | null;
  /** A cause tag's code → its name. */
  causeName: (code: string) => string;
}

const parse = (text: unknown): Json | null => {
  if (text == null) return null;
  if (typeof text === "object") return text as Json;
  try {
    const v = JSON.parse(String(text)) as unknown;
    return v && typeof v === "object" && !Array.isArray(v) ? (v as Json) : null;
  } catch {
    return null;
  }
};

/** How many items a stored JSON array holds (1 when it is not one). */
const arrayLength = (text: unknown): number => {
  try {
    const v = typeof text === "string" ? (JSON.parse(text) as unknown) : text;
    return Array.isArray(v) ? v.length : 1;
  } catch {
    return 1;
  }
};

const count = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;
const list = (xs: string[]) => (xs.length <= 1 ? (xs[0] ?? "") : `${xs.slice(0, -1).join(", ")} and ${xs[xs.length - 1]}`);
const dispositionWords = (d: unknown) => (typeof d === "string" ? (DISPOSITION_LABELS[d as Disposition] ?? d).toLowerCase() : "none");

/** The fields of a defect entry, in words, for "changed the …". */
const DEFECT_FIELDS: Record<string, string> = {
  type_id: "type",
  face: "face",
  position_along_mm: "position",
  position_across_mm: "position",
  length_mm: "size",
  width_mm: "size",
  depth_mm: "depth",
  severity: "severity",
  stage: "where it was found",
  disposition: "disposition",
  note: "note",
};

function defectChanges(before: Json | null, after: Json | null, ctx: WordsContext): string {
  if (!before || !after) return "";
  const said = new Set<string>();
  const parts: string[] = [];
  for (const [key, word] of Object.entries(DEFECT_FIELDS)) {
    if (before[key] === after[key] || said.has(word)) continue;
    said.add(word);
    if (key === "severity") parts.push(`severity ${before[key] ?? "—"} → ${after[key] ?? "—"}`);
    else if (key === "type_id") parts.push(`type ${ctx.typeCode(before[key]) ?? "—"} → ${ctx.typeCode(after[key]) ?? "—"}`);
    else if (key === "disposition") parts.push(`disposition ${dispositionWords(before[key])} → ${dispositionWords(after[key])}`);
    else if (key === "face")
      parts.push(`face ${(FACE_LABELS[before[key] as Face] ?? "—").toLowerCase()} → ${(FACE_LABELS[after[key] as Face] ?? "—").toLowerCase()}`);
    else parts.push(word);
  }
  return parts.length ? `: ${list(parts)}` : "";
}

const INVESTIGATION_WORDS: Record<string, string> = {
  "investigation.open": "opened",
  "investigation.update": "changed",
  "investigation.subjects.add": "took in more heats or defects",
  "investigation.participants.add": "added participants",
  "investigation.hypothesis.add": "added a hypothesis",
  "investigation.hypothesis.update": "changed a hypothesis",
  "investigation.action.add": "added an action",
  "investigation.action.update": "changed an action",
  "investigation.close": "closed",
  "investigation.attachments.add": "attached files",
};

/** One audit row in words. `entityId` names the record; before/after are the stored JSON texts. */
export function auditWords(a: { action: string; entity: string; entityId: string | null; before: unknown; after: unknown }, ctx: WordsContext): string {
  const before = parse(a.before);
  const after = parse(a.after);
  switch (a.entity) {
    case "defect": {
      const d = ctx.defect(a.entityId);
      switch (a.action) {
        case "defect.create":
          return `Logged ${d}${typeof after?.severity === "number" ? `, severity ${after.severity}` : ""}`;
        case "defect.update":
          return `Changed ${d}${defectChanges(before, after, ctx)}`;
        case "defect.delete":
          return `Deleted the entry ${d}`;
        case "defect.review.confirm":
          return `Reviewed ${d}: confirmed as logged`;
        case "defect.review.correct":
          return `Reviewed ${d}: corrected${defectChanges(before, after, ctx)}`;
        case "defect.review.reject":
          return `Reviewed ${d}: rejected${typeof after?.note === "string" && after.note ? ` (“${after.note}”)` : ""}`;
        case "defect.photos.add": {
          const n = Array.isArray(after?.photos) ? after.photos.length : 1;
          return `Added ${count(n, "photo")} to ${d}`;
        }
        case "defect.photos.delete":
          return `Removed a photo from ${d}`;
        case "defect.causes.tag": {
          const tags = Array.isArray(after?.tags) ? (after.tags as string[]).map(ctx.causeName) : [];
          return `Tagged ${d} with ${tags.length === 1 ? "the cause" : "the causes"} ${list(tags)}${typeof after?.confidence === "string" ? ` (${after.confidence})` : ""}`;
        }
        case "defect.causes.remove": {
          const tag = typeof before?.tagName === "string" ? before.tagName : "a cause";
          return `Removed the cause ${tag} from ${d}${typeof after?.reason === "string" && after.reason ? ` (“${after.reason}”)` : ""}`;
        }
        default:
          return `Changed ${d}`;
      }
    }
    case "defect_selection": {
      const tags = Array.isArray(after?.tags) ? (after.tags as string[]).map(ctx.causeName) : [];
      const n = typeof after?.tagged === "number" ? after.tagged : null;
      const defects = Array.isArray(after?.defects) ? after.defects.length : null;
      return `Tagged ${defects === null ? "the heat's defects" : count(defects, "defect")} of heat ${a.entityId ?? ""} at once with ${list(tags) || "causes"}${typeof after?.confidence === "string" ? ` (${after.confidence})` : ""}${n !== null ? `: ${count(n, "tagging")} written` : ""}`;
    }
    case "investigation": {
      const inv = ctx.investigation(a.entityId);
      if (a.action === "investigation.update" && typeof after?.status === "string") return `Investigation ${inv}: status → ${after.status.replace(/_/g, " ")}`;
      return `Investigation ${inv}: ${INVESTIGATION_WORDS[a.action] ?? "changed"}`;
    }
    case "claim": {
      const c = ctx.claim(a.entityId);
      switch (a.action) {
        case "claim.create":
          return `Claim ${c} recorded`;
        case "claim.update":
          return typeof after?.status === "string" ? `Claim ${c}: status → ${after.status.replace(/_/g, " ")}` : `Claim ${c} changed`;
        case "claim.slabs.link":
          return `Claim ${c}: ${count(typeof after?.added === "number" ? after.added : 1, "slab")} linked`;
        case "claim.slabs.unlink":
          return `Claim ${c}: slab ${typeof after?.slabId === "string" ? after.slabId : ""} unlinked`.trim();
        case "claim.history.sent": {
          const to = Array.isArray(after?.to) ? list(after.to as string[]) : "";
          const edition = after?.edition === "customer" ? "customer edition of the " : after?.edition === "internal" ? "internal edition of the " : "";
          // Recorded when it was queued: whether the mail server took it is the claim's own history.
          return `Claim ${c}: ${edition}heat ${typeof after?.heatNo === "string" ? after.heatNo : ""} history handed to the mail outbox${to ? ` for ${to}` : ""}`;
        }
        case "claim.attachments.add": {
          const n = arrayLength(a.after);
          return `Claim ${c}: ${n > 1 ? `${n} files` : "a file"} attached`;
        }
        default:
          return `Claim ${c} changed`;
      }
    }
    default:
      return "Record changed";
  }
}
