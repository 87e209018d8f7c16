/**
 * The audit trail of a heat's history said in words: who did what to which record, as a person
 * reading a claim file would say it. Stored internals — row ids, type ids, client keys, photo
 * hashes, raw JSON — never reach the sentence; a record is named by what the plant calls it
 * (the defect type on its slab, the investigation's reference, the claim's number).
 *
 * The sentences are the `audit` catalogue's (shared/i18n/locales/<lang>/audit.json), whole, in the
 * reader's language; the shared list words (faces, dispositions, cause confidence) are
 * `common:terms.*`. Data stay data: type codes, slab and heat numbers, cause names, notes and
 * addresses go into the sentence as they are stored.
 */
import { FACES } from "@shared/domain";
import type { Language } from "@shared/i18n/languages";
import { translator } from "../lib/i18n";
import { currentLanguage } from "../lib/words";

type Json = Record<string, unknown>;
type Values = Record<string, unknown>;

export interface WordsContext {
  /** A defect's row id → its type code and slab ("SLG", "24A0012-03"); null for none on record. */
  defect: (id: string | null) => { type: string; slab: string } | null;
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

/** The words of one language: `say` a text of the audit catalogue, the list words, a list. */
function wordsIn(language: Language) {
  const t = translator(language);
  const say = (key: string, values: Values = {}): string => t(`audit:${key}`, values) as string;
  // English lower-cases a list word inside its sentence; German keeps its nouns' capitals.
  const inSentence = (word: string) => (language === "de" ? word : word.toLowerCase());
  const term = (list: string, key: string): string => t(`common:terms.${list}.${key}`, { defaultValue: key }) as string;
  const list = (xs: string[]) => (xs.length <= 1 ? (xs[0] ?? "") : say("list", { items: xs.slice(0, -1).join(", "), last: xs[xs.length - 1] }));
  return { say, inSentence, term, list };
}
type Words = ReturnType<typeof wordsIn>;

const dispositionWords = (w: Words, d: unknown) => (typeof d === "string" ? w.inSentence(w.term("dispositions", d)) : w.say("changes.noDisposition"));
/** A face in words; "—" for none, or for one not among the faces. */
const faceWords = (w: Words, f: unknown) => ((FACES as readonly unknown[]).includes(f) ? w.inSentence(w.term("faces", f as string)) : "—");
/** Cause confidence, in parentheses after the causes: an adjective, lower-case in both languages. */
const confidenceWords = (w: Words, c: string) => w.term("causeConfidence", c).toLowerCase();
/** A stored status in words ("in_progress" → "in progress"); one the catalogue lacks as stored. */
const statusWords = (w: Words, of: "investigation" | "claim", s: string) => w.say(`status.${of}.${s}`, { defaultValue: s.replace(/_/g, " ") });

/** The fields of a defect entry, by the change they are said as (position and size have two each). */
const DEFECT_FIELDS: Record<string, string> = {
  type_id: "type",
  face: "face",
  position_along_mm: "position",
  position_across_mm: "position",
  length_mm: "size",
  width_mm: "size",
  depth_mm: "depth",
  severity: "severity",
  stage: "stage",
  disposition: "disposition",
  note: "note",
};

/** What changed on a defect entry, as a list ("severity 2 → 3 and size"); "" when nothing is known. */
function defectChanges(before: Json | null, after: Json | null, ctx: WordsContext, w: Words): string {
  if (!before || !after) return "";
  const said = new Set<string>();
  const parts: string[] = [];
  for (const [key, change] of Object.entries(DEFECT_FIELDS)) {
    if (before[key] === after[key] || said.has(change)) continue;
    said.add(change);
    const was = before[key];
    const is = after[key];
    if (key === "severity") parts.push(w.say("changes.severity", { from: was ?? "—", to: is ?? "—" }));
    else if (key === "type_id") parts.push(w.say("changes.type", { from: ctx.typeCode(was) ?? "—", to: ctx.typeCode(is) ?? "—" }));
    else if (key === "disposition") parts.push(w.say("changes.disposition", { from: dispositionWords(w, was), to: dispositionWords(w, is) }));
    else if (key === "face") parts.push(w.say("changes.face", { from: faceWords(w, was), to: faceWords(w, is) }));
    else parts.push(w.say(`changes.${change}`));
  }
  return w.list(parts);
}

/** An investigation's action → its sentence's key (investigation.*). */
const INVESTIGATION_WORDS: Record<string, string> = {
  "investigation.open": "opened",
  "investigation.update": "changed",
  "investigation.subjects.add": "subjectsAdded",
  "investigation.participants.add": "participantsAdded",
  "investigation.hypothesis.add": "hypothesisAdded",
  "investigation.hypothesis.update": "hypothesisChanged",
  "investigation.action.add": "actionAdded",
  "investigation.action.update": "actionChanged",
  "investigation.close": "closed",
  "investigation.attachments.add": "filesAttached",
};

/**
 * One audit row in words, in `language` (the current one — the request's — unless given).
 * `entityId` names the record; before/after are the stored JSON texts.
 */
export function auditWords(
  a: { action: string; entity: string; entityId: string | null; before: unknown; after: unknown },
  ctx: WordsContext,
  language: Language = currentLanguage(),
): string {
  const w = wordsIn(language);
  const { say } = w;
  const before = parse(a.before);
  const after = parse(a.after);
  const confidence = typeof after?.confidence === "string" ? confidenceWords(w, after.confidence) : null;
  switch (a.entity) {
    case "defect": {
      const named = ctx.defect(a.entityId);
      const defect = named ? say("record.defect", named) : say("record.unknownDefect");
      switch (a.action) {
        case "defect.create":
          return typeof after?.severity === "number" ? say("defect.loggedSeverity", { defect, severity: after.severity }) : say("defect.logged", { defect });
        case "defect.update": {
          const changes = defectChanges(before, after, ctx, w);
          return changes ? say("defect.changedWhat", { defect, changes }) : say("defect.changed", { defect });
        }
        case "defect.delete":
          return say("defect.deleted", { defect });
        case "defect.review.confirm":
          return say("defect.reviewConfirmed", { defect });
        case "defect.review.correct": {
          const changes = defectChanges(before, after, ctx, w);
          return changes ? say("defect.reviewCorrectedWhat", { defect, changes }) : say("defect.reviewCorrected", { defect });
        }
        case "defect.review.reject":
          return typeof after?.note === "string" && after.note
            ? say("defect.reviewRejectedNote", { defect, note: after.note })
            : say("defect.reviewRejected", { defect });
        case "defect.photos.add":
          return say("defect.photosAdded", { defect, count: Array.isArray(after?.photos) ? after.photos.length : 1 });
        case "defect.photos.delete":
          return say("defect.photoRemoved", { defect });
        case "defect.causes.tag": {
          const tags = Array.isArray(after?.tags) ? (after.tags as string[]).map(ctx.causeName) : [];
          const values = { defect, causes: w.list(tags), count: tags.length };
          return confidence === null ? say("defect.causesTagged", values) : say("defect.causesTaggedConfidence", { ...values, confidence });
        }
        case "defect.causes.remove": {
          const cause = typeof before?.tagName === "string" ? before.tagName : null;
          const reason = typeof after?.reason === "string" && after.reason ? after.reason : null;
          const key = `defect.${cause === null ? "unnamedCauseRemoved" : "causeRemoved"}${reason === null ? "" : "Reason"}`;
          return say(key, { defect, cause, reason });
        }
        default:
          return say("defect.changed", { defect });
      }
    }
    case "defect_selection": {
      const kind = (after?.selection as { kind?: unknown } | null | undefined)?.kind;
      const tags = Array.isArray(after?.tags) ? (after.tags as string[]).map(ctx.causeName) : [];
      const n = typeof after?.tagged === "number" ? after.tagged : null;
      const values = {
        defects: Array.isArray(after?.defects) ? say("selection.defects", { count: after.defects.length }) : say("selection.allDefects"),
        // Where the selection came from: a heat or a sequence by its number, else defects chosen on a list (or by filters).
        where:
          kind === "heat"
            ? say("selection.ofHeat", { heat: a.entityId ?? "" })
            : kind === "sequence"
              ? say("selection.ofSequence", { sequence: a.entityId ?? "" })
              : say("selection.chosen"),
        causes: w.list(tags) || say("selection.anyCauses"),
        confidence,
        taggings: n === null ? null : say("selection.taggings", { count: n }),
      };
      return say(`selection.tagged${confidence === null ? "" : "Confidence"}${n === null ? "" : "Written"}`, values);
    }
    case "investigation": {
      const investigation = ctx.investigation(a.entityId);
      if (a.action === "investigation.update" && typeof after?.status === "string")
        return say("investigation.status", { investigation, status: statusWords(w, "investigation", after.status) });
      return say(`investigation.${INVESTIGATION_WORDS[a.action] ?? "changed"}`, { investigation });
    }
    case "claim": {
      const claim = ctx.claim(a.entityId);
      switch (a.action) {
        case "claim.create":
          return say("claim.recorded", { claim });
        case "claim.update":
          return typeof after?.status === "string"
            ? say("claim.status", { claim, status: statusWords(w, "claim", after.status) })
            : say("claim.changed", { claim });
        case "claim.slabs.link":
          return say("claim.slabsLinked", { claim, count: typeof after?.added === "number" ? after.added : 1 });
        case "claim.slabs.unlink":
          return say("claim.slabUnlinked", { claim, slab: typeof after?.slabId === "string" ? after.slabId : "" }).trim();
        case "claim.history.sent": {
          const to = Array.isArray(after?.to) ? w.list(after.to as string[]) : "";
          const edition = after?.edition === "customer" ? "customerHistorySent" : after?.edition === "internal" ? "internalHistorySent" : "historySent";
          // Recorded when it was queued: whether the mail server took it is the claim's own history.
          return say(`claim.${edition}${to ? "To" : ""}`, { claim, heat: typeof after?.heatNo === "string" ? after.heatNo : "", to });
        }
        case "claim.attachments.add": {
          const n = arrayLength(a.after);
          return say("claim.filesAttached", { claim, count: n > 1 ? n : 1 });
        }
        default:
          return say("claim.changed", { claim });
      }
    }
    default:
      return say("recordChanged");
  }
}
