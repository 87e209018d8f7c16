/**
 * A heat's whole history — chemistry, conditions (heat-level and per slab with their sources),
 * slabs, defects with photos and causes, investigations, claims on the heat or its sequence, the
 * audit trail — as JSON (the trace screen, the printable view) and as a workbook (exceljs) whose
 * cells are the same values. The trace resolves a coil, plate, slab or heat id to its heat.
 */
import fs from "node:fs";
import path from "node:path";
import type ExcelJS from "exceljs";
import type { TFunction } from "i18next";
import type { Language } from "@shared/i18n/languages";
import {
  CUSTOMER_DEFAULT_SECTIONS,
  HISTORY_SECTIONS,
  type HistorySection,
  type CustomerSection,
  type HeatHistory,
  type HistoryCover,
  type HistoryEdition,
  type Trace,
} from "@shared/api/claims";
import { VARIABLES } from "@shared/variables";
import type { Db } from "../db/client";
import { badRequest, notFound, said } from "../lib/http-error";
import { translator } from "../lib/i18n";
import { currentLanguage } from "../lib/words";
import {
  addItemSheet,
  addTableSheet,
  newWorkbook,
  workbookBuffer,
  D1,
  D2,
  D3,
  D4,
  DT,
  N0,
  type SheetColumn as Col,
  type TableLook,
} from "../lib/workbook-sheets";
import { auditWords } from "./history-words";

type Row = Record<string, any>;
const iso = (ms: number | null | undefined) => (ms == null ? null : new Date(ms).toISOString());

const HEAT_CONDITIONS: { key: string; label: string; unit: string; col: string; source?: string }[] = [
  { key: "casting_speed_m_min", label: "Casting speed", unit: "m/min", col: "casting_speed_m_min" },
  { key: "tundish_temp_c", label: "Tundish temperature", unit: "°C", col: "tundish_temp_c" },
  { key: "liquidus_c", label: "Liquidus", unit: "°C", col: "liquidus_c", source: "liquidus_source" },
  { key: "superheat_c", label: "Superheat", unit: "°C", col: "superheat_c", source: "superheat_source" },
  { key: "embr_current_a", label: "EMBr current", unit: "A", col: "embr_current_a" },
  { key: "sen_depth_mm", label: "SEN immersion depth", unit: "mm", col: "sen_depth_mm" },
  { key: "argon_nl_min", label: "Argon flow", unit: "NL/min", col: "argon_nl_min" },
  { key: "mold_level_sd_mm", label: "Mold level s.d.", unit: "mm", col: "mold_level_sd_mm" },
];

/**
 * A condition as the history shows and exports it: to its variable's displayed precision
 * (shared/variables.ts; temperatures without one to 0.1 °C). The history is a document; the
 * reports compute on the stored values, which keep every digit (a derived superheat of
 * 27.464999999999918 °C reads 27.5 here).
 */
function shown(key: string, value: unknown): number | null {
  if (typeof value !== "number" || !Number.isFinite(value)) return null;
  const digits = VARIABLES.find((v) => v.key === key)?.digits ?? 1;
  return Number(value.toFixed(digits));
}

/** Per-slab resolved conditions (slab_conditions) with the column of each one's source. */
export const SLAB_CONDITIONS: { key: string; label: string; unit: string; source: string }[] = [
  { key: "casting_speed_m_min", label: "Casting speed", unit: "m/min", source: "casting_speed_source" },
  { key: "superheat_c", label: "Superheat", unit: "°C", source: "superheat_source" },
  { key: "embr_current_a", label: "EMBr current", unit: "A", source: "embr_current_source" },
  { key: "sen_depth_mm", label: "SEN immersion depth", unit: "mm", source: "sen_depth_source" },
  { key: "argon_nl_min", label: "Argon flow", unit: "NL/min", source: "argon_source" },
  { key: "mold_level_sd_mm", label: "Mold level s.d.", unit: "mm", source: "mold_level_sd_source" },
];

const ELEMENTS: [string, string, string][] = [
  ["c_pct", "Carbon (C)", "wt %"],
  ["si_pct", "Silicon (Si)", "wt %"],
  ["mn_pct", "Manganese (Mn)", "wt %"],
  ["p_pct", "Phosphorus (P)", "wt %"],
  ["s_pct", "Sulphur (S)", "wt %"],
  ["al_pct", "Aluminium (Al)", "wt %"],
  ["cu_pct", "Copper (Cu)", "wt %"],
  ["ni_pct", "Nickel (Ni)", "wt %"],
  ["cr_pct", "Chromium (Cr)", "wt %"],
  ["mo_pct", "Molybdenum (Mo)", "wt %"],
  ["ti_pct", "Titanium (Ti)", "wt %"],
  ["nb_pct", "Niobium (Nb)", "wt %"],
  ["v_pct", "Vanadium (V)", "wt %"],
  ["n_ppm", "Nitrogen (N)", "ppm"],
];

const inList = (ids: number[]) => (ids.length ? `(${ids.map((x) => Math.trunc(x)).join(",")})` : "(null)");

export interface HistoryOptions {
  /** "internal" (default): everything, the audit trail in words. "customer": the parts chosen, nothing internal. */
  edition?: HistoryEdition;
  /** The customer edition's parts (default CUSTOMER_DEFAULT_SECTIONS). */
  sections?: CustomerSection[];
  /** The claim the history is prepared for: its cover page. */
  claimId?: number;
  /** Who prepares it (the cover page; a name, never an address). */
  preparedBy?: string;
  /**
   * The language the audit trail is said in: the workbook's, for a workbook made of this history;
   * the current one (the request's, server/lib/words.ts) when not given.
   */
  language?: Language | null;
}

/** A heat's history in the edition asked for; see HistoryOptions. */
export function heatHistory(db: Db, heatNo: string, opts: HistoryOptions = {}): HeatHistory {
  const full = internalHistory(db, heatNo, opts.language ?? currentLanguage());
  if (opts.claimId !== undefined) full.edition.cover = coverOf(db, full, opts.claimId, opts.preparedBy ?? "");
  if (opts.edition === "customer") return customerEdition(full, opts.sections ?? CUSTOMER_DEFAULT_SECTIONS);
  return { ...full, audit: full.audit.map(({ at, by, what }) => ({ at, by, what })) };
}

/** The record of an audit row about a defect entry deleted since (the internal edition keeps it; the customer's leaves it out). */
const DELETED_DEFECT = "deleted defect";

/** An audit row with what the customer edition chooses by: the kind of record and its plant name. */
type ScopedAudit = HeatHistory["audit"][number] & { scope: "defect" | "causes" | "investigation" | "claim" | "other"; record: string | null };
type FullHistory = Omit<HeatHistory, "audit"> & { audit: ScopedAudit[] };

/** The claim's cover page: refused when the claim has no slab of this heat. */
function coverOf(db: Db, hist: FullHistory, claimId: number, preparedBy: string): HistoryCover {
  const sqlite = db.$client;
  const c = sqlite.prepare("select * from claims where id = ?").get(claimId) as Row | undefined;
  if (!c) throw notFound(said("claims.noClaimDeleted"));
  const slabs = sqlite
    .prepare(
      "select s.slab_id from claim_slabs cs join slabs s on s.id = cs.slab_id join heats h on h.id = s.heat_id where cs.claim_id = ? and h.heat_no = ? order by s.slab_id",
    )
    .pluck()
    .all(claimId, hist.heat.heatNo) as string[];
  if (!slabs.length) throw badRequest(said("claims.noSlabOfHeat", { claim: c.claim_no, heat: hist.heat.heatNo }), { field: "claim" }, "claim_not_on_heat");
  const ofHeat = new Set(hist.slabs.flatMap((s) => s.products));
  const products = String(c.product_ids ?? "")
    .split(",")
    .map((x) => x.trim())
    .filter(Boolean);
  return {
    claimNo: c.claim_no,
    customer: c.customer,
    receivedOn: c.received_on,
    defectComplained: c.defect_complained,
    quantityT: c.quantity_t ?? null,
    products: products.filter((x) => ofHeat.has(x)),
    otherProducts: products.filter((x) => !ofHeat.has(x)),
    slabs,
    preparedBy,
  };
}

/**
 * The customer edition: only the parts chosen, and of those only what a customer may read — no
 * database ids (defects and investigations are numbered in the document), no names of the plant's
 * people but on the cover, no review states, inspectors' notes, cause notes, process samples, other
 * customers' claims or links into the application. The audit trail, when chosen, keeps only the
 * records the document shows.
 */
function customerEdition(full: FullHistory, chosen: CustomerSection[]): HeatHistory {
  const on = new Set<string>(chosen);
  const sections = HISTORY_SECTIONS.filter((x) => on.has(x));
  const defectsOn = on.has("defects");
  const number = new Map(full.defects.map((d, i) => [d.id, i + 1]));
  const keptDefects = defectsOn ? full.defects : [];
  const liveCauses = on.has("causes") ? full.causes.filter((c) => c.removedAt === null && (!defectsOn || number.has(c.defectId))) : [];
  const invs = on.has("investigations") ? full.investigations.filter((i) => i.sameHeat) : [];
  const claimNo = full.edition.cover?.claimNo ?? null;
  // Causes by their names (the codes are the plant's shorthand); coils only the claim's own (the
  // heat's other coils may have gone to other customers).
  const causeName = new Map(full.causes.map((c) => [c.tag, c.tagName]));
  const claimProducts = new Set(full.edition.cover?.products ?? []);
  return {
    generatedAt: full.generatedAt,
    edition: { kind: "customer", sections, cover: full.edition.cover },
    heat: {
      ...full.heat,
      conditions: on.has("conditions") ? full.heat.conditions : [],
      chemistry: on.has("chemistry") ? full.heat.chemistry : [],
    },
    slabs: on.has("slabs")
      ? full.slabs.map((x) => ({
          ...x,
          disposition: on.has("dispositions") ? x.disposition : null,
          conditions: on.has("conditions") ? x.conditions : [],
          products: x.products.filter((p) => claimProducts.has(p)),
        }))
      : [],
    defects: keptDefects.map((d) => ({
      ...d,
      id: number.get(d.id)!,
      disposition: on.has("dispositions") ? d.disposition : null,
      reviewStatus: null,
      loggedBy: null,
      note: null,
      causes: on.has("causes") ? d.causes.map((c) => causeName.get(c) ?? c) : [],
      photos: on.has("photos") ? d.photos : [],
    })),
    causes: liveCauses.map((c) => ({ ...c, defectId: number.get(c.defectId) ?? 0, note: null, by: null })),
    samples: null,
    investigations: invs.map((i, k) => ({ ...i, id: k + 1, owner: null })),
    claims: [],
    audit: on.has("audit")
      ? full.audit
          .filter(
            (a) =>
              // An entry deleted since is not in the document: nor is its trail.
              (a.scope === "defect" && defectsOn && a.record !== DELETED_DEFECT) ||
              (a.scope === "causes" && on.has("causes") && a.record !== DELETED_DEFECT) ||
              (a.scope === "investigation" && invs.some((i) => i.ref === a.record)) ||
              (a.scope === "claim" && claimNo !== null && a.record === claimNo),
          )
          .map(({ at, what }) => ({ at, by: null, what }))
      : [],
  };
}

function internalHistory(db: Db, heatNo: string, language: Language): FullHistory {
  const sqlite = db.$client;
  const h = sqlite
    .prepare(
      `select h.*, q.sequence_no as sequenceNo, ca.code as casterCode, g.code as gradeCode, g.name as gradeName, f.code as familyCode
       from heats h left join sequences q on q.id = h.sequence_id join casters ca on ca.id = h.caster_id join grades g on g.id = h.grade_id join grade_families f on f.id = g.family_id
       where h.heat_no = ?`,
    )
    .get(heatNo.trim().toUpperCase()) as Row | undefined;
  if (!h) throw notFound(said("heats.noHeatOnRecord", { heat: heatNo }));

  const slabs = sqlite
    .prepare(
      `select s.*, st.strand_no, c.*, s.slab_id as slabCode, s.weight_t as slabWeight,
         (select count(*) from defects d where d.slab_id = s.id and d.deleted_at is null) as nDefects
       from slabs s join strands st on st.id = s.strand_id left join slab_conditions c on c.slab_id = s.id
       where s.heat_id = ? order by st.strand_no, s.piece_no`,
    )
    .all(h.id) as Row[];
  const slabRowIds = slabs.map((s) => s.id as number);
  const products = sqlite.prepare(`select product_id, slab_id from products where slab_id in ${inList(slabRowIds)} order by product_id`).all() as Row[];
  const defects = sqlite
    .prepare(
      `select d.*, s.slab_id as slabCode, t.code as typeCode, t.name as typeName, u.name as byName from defects d join slabs s on s.id = d.slab_id
       join defect_types t on t.id = d.type_id left join user u on u.id = d.created_by
       where s.heat_id = ? and d.deleted_at is null order by d.found_at, d.id`,
    )
    .all(h.id) as Row[];
  const defectIds = defects.map((d) => d.id as number);
  // Entries deleted since: not in the record's lists, but what was logged and deleted on the heat stays in its audit trail (a claim's file needs it).
  const deleted = sqlite
    .prepare(
      `select d.id, s.slab_id as slabCode, t.code as typeCode from defects d join slabs s on s.id = d.slab_id join defect_types t on t.id = d.type_id
       where s.heat_id = ? and d.deleted_at is not null`,
    )
    .all(h.id) as Row[];
  const deletedIds = new Set(deleted.map((d) => String(d.id)));
  const everDefectIds = [...defectIds, ...deleted.map((d) => d.id as number)];
  const photos = sqlite
    .prepare(`select id, defect_id from defect_photos where deleted_at is null and defect_id in ${inList(defectIds)} order by created_at, id`)
    .all() as Row[];
  const causes = sqlite
    .prepare(
      `select dc.*, t.code, t.name, s.slab_id as slabCode, cu.name as byName, ru.name as removedByName from defect_causes dc join cause_tags t on t.id = dc.tag_id
       join defects d on d.id = dc.defect_id join slabs s on s.id = d.slab_id left join user cu on cu.id = dc.created_by left join user ru on ru.id = dc.removed_by
       where dc.defect_id in ${inList(defectIds)} order by dc.created_at, dc.id`,
    )
    .all() as Row[];
  const strands = [...new Set(slabs.map((s) => s.strand_id as number))];
  const end = h.cast_end ?? h.cast_start + 4 * 3600_000;
  const sampleCount = strands.length
    ? (sqlite
        .prepare(`select count(*) from process_samples where strand_id in ${inList(strands)} and sampled_at between ? and ?`)
        .pluck()
        .get(h.cast_start, end) as number)
    : 0;

  // Investigations and claims on this heat, or on another heat of its sequence.
  const seqHeats = h.sequence_id ? (sqlite.prepare("select id from heats where sequence_id = ?").pluck().all(h.sequence_id) as number[]) : [h.id];
  const investigations = sqlite
    .prepare(
      `select distinct i.*, t.name as causeName, u.name as ownerName,
         exists (select 1 from investigation_subjects x left join defects d on d.id = x.defect_id left join slabs s on s.id = d.slab_id
                 where x.investigation_id = i.id and (x.heat_id = @heat or s.heat_id = @heat)) as sameHeat
       from investigations i join investigation_subjects x on x.investigation_id = i.id left join defects d on d.id = x.defect_id left join slabs s on s.id = d.slab_id
       left join cause_tags t on t.id = i.confirmed_cause_tag_id left join user u on u.id = i.owner_id
       where x.heat_id in ${inList(seqHeats)} or s.heat_id in ${inList(seqHeats)} order by i.opened_at`,
    )
    .all({ heat: h.id }) as Row[];
  const claims = sqlite
    .prepare(
      `select c.*, group_concat(case when s.heat_id = @heat then s.slab_id end) as slabCodes, max(s.heat_id = @heat) as sameHeat
       from claims c join claim_slabs cs on cs.claim_id = c.id join slabs s on s.id = cs.slab_id
       where s.heat_id in ${inList(seqHeats)} group by c.id order by c.received_on`,
    )
    .all({ heat: h.id }) as Row[];
  const audit = sqlite
    .prepare(
      `select a.*, coalesce(a.user_name, u.name, a.actor) as byName from audit_log a left join user u on u.id = a.user_id
       where (a.entity = 'defect' and a.entity_id in (${everDefectIds.map((d) => `'${d}'`).join(",") || "null"}))
          or (a.entity = 'investigation' and a.entity_id in (${
            investigations
              .filter((i) => i.sameHeat)
              .map((i) => `'${i.id}'`)
              .join(",") || "null"
          }))
          or (a.entity = 'claim' and a.entity_id in (${
            claims
              .filter((c) => c.sameHeat)
              .map((c) => `'${c.id}'`)
              .join(",") || "null"
          }))
          or (a.entity = 'defect_selection' and a.entity_id = @heatNo)
          or (a.entity = 'defect_selection' and json_valid(a.after) and exists (select 1 from json_each(a.after, '$.defects') j where j.value in ${inList(everDefectIds)}))
       order by a.at, a.id`,
    )
    .all({ heatNo: h.heat_no }) as Row[];

  const live = new Map<number, string[]>();
  for (const c of causes) if (c.removed_at == null) live.set(c.defect_id, [...(live.get(c.defect_id) ?? []), c.code]);
  const photosOf = new Map<number, HeatHistory["defects"][number]["photos"]>();
  for (const p of photos)
    photosOf.set(p.defect_id, [...(photosOf.get(p.defect_id) ?? []), { id: p.id, url: `/api/photos/${p.id}`, thumbUrl: `/api/photos/${p.id}/thumb` }]);
  // What the audit trail's sentences call each record.
  const defectName = new Map([...defects, ...deleted].map((d) => [String(d.id), { type: String(d.typeCode), slab: String(d.slabCode) }]));
  const invRefs = new Map(investigations.map((i) => [String(i.id), String(i.ref)]));
  const claimNos = new Map(claims.map((c) => [String(c.id), String(c.claim_no)]));
  const typeCodes = new Map((sqlite.prepare("select id, code from defect_types").all() as Row[]).map((t) => [Number(t.id), String(t.code)]));
  const tagNames = new Map((sqlite.prepare("select code, name from cause_tags").all() as Row[]).map((t) => [String(t.code), String(t.name)]));
  const words = {
    defect: (id: string | null) => defectName.get(String(id)) ?? null,
    investigation: (id: string | null) => invRefs.get(String(id)) ?? "",
    claim: (id: string | null) => claimNos.get(String(id)) ?? "",
    typeCode: (id: unknown) => typeCodes.get(Number(id)) ?? null,
    causeName: (code: string) => tagNames.get(code) ?? code,
  };

  return {
    generatedAt: new Date().toISOString(),
    edition: { kind: "internal", sections: [...HISTORY_SECTIONS], cover: null },
    heat: {
      heatNo: h.heat_no,
      sequenceNo: h.sequenceNo ?? null,
      sequencePosition: h.sequence_position ?? null,
      caster: h.casterCode,
      grade: h.gradeCode,
      gradeName: h.gradeName,
      family: h.familyCode,
      castStart: iso(h.cast_start)!,
      castEnd: iso(h.cast_end),
      ladleWeightT: h.ladle_weight_t ?? null,
      conditions: HEAT_CONDITIONS.map((c) => ({
        key: c.key,
        label: c.label,
        unit: c.unit,
        value: shown(c.key, h[c.col]),
        source: c.source ? (h[c.source] ?? null) : h[c.col] == null ? null : "heat record",
      })),
      chemistry: ELEMENTS.map(([key, element, unit]) => ({ key, element, unit, value: h[key] ?? null })),
    },
    slabs: slabs.map((s) => ({
      slabId: s.slabCode,
      strand: s.strand_no,
      pieceNo: s.piece_no,
      lengthMm: s.length_mm,
      widthMm: s.width_mm,
      thicknessMm: s.thickness_mm,
      weightT: s.slabWeight ?? null,
      castAt: iso(s.cast_at),
      transition: Boolean(s.transition),
      disposition: s.disposition ?? null,
      defects: s.nDefects,
      conditions: SLAB_CONDITIONS.map((c) => ({ key: c.key, value: shown(c.key, s[c.key]), source: s[c.source] ?? null })),
      products: products.filter((p) => p.slab_id === s.id).map((p) => p.product_id),
    })),
    defects: defects.map((d) => ({
      id: d.id,
      slabId: d.slabCode,
      type: d.typeCode,
      typeName: d.typeName,
      face: d.face,
      positionAlongMm: d.position_along_mm,
      positionAcrossMm: d.position_across_mm,
      lengthMm: d.length_mm,
      widthMm: d.width_mm,
      depthMm: d.depth_mm,
      severity: d.severity,
      stage: d.stage,
      disposition: d.disposition,
      reviewStatus: d.review_status,
      foundAt: iso(d.found_at)!,
      loggedBy: d.byName ?? null,
      note: d.note ?? null,
      causes: live.get(d.id) ?? [],
      photos: photosOf.get(d.id) ?? [],
    })),
    causes: causes.map((c) => ({
      defectId: c.defect_id,
      slabId: c.slabCode,
      tag: c.code,
      tagName: c.name,
      confidence: c.confidence,
      note: c.note ?? null,
      by: c.byName ?? null,
      at: iso(c.created_at)!,
      removedAt: iso(c.removed_at),
      removedBy: c.removedByName ?? null,
    })),
    samples: { count: sampleCount, strands: [...new Set(slabs.map((s) => s.strand_no as number))] },
    investigations: investigations.map((i) => ({
      id: i.id,
      ref: i.ref,
      title: i.title,
      status: i.status,
      openedAt: iso(i.opened_at)!,
      closedAt: iso(i.closed_at),
      confirmedCause: i.causeName ?? null,
      owner: i.ownerName ?? null,
      sameHeat: Boolean(i.sameHeat),
    })),
    claims: claims.map((c) => ({
      id: c.id,
      claimNo: c.claim_no,
      customer: c.customer,
      receivedOn: c.received_on,
      defectComplained: c.defect_complained,
      status: c.status,
      quantityT: c.quantity_t ?? null,
      sameHeat: Boolean(c.sameHeat),
      slabs: c.slabCodes ? String(c.slabCodes).split(",") : [],
    })),
    audit: audit.map((a) => ({
      at: iso(a.at)!,
      by: a.byName ?? null,
      what: auditWords({ action: a.action, entity: a.entity, entityId: a.entity_id ?? null, before: a.before, after: a.after }, words, language),
      scope: (a.entity === "defect_selection" || String(a.action).startsWith("defect.causes")
        ? "causes"
        : ["defect", "investigation", "claim"].includes(a.entity)
          ? a.entity
          : "other") as ScopedAudit["scope"],
      record:
        a.entity === "claim"
          ? (claimNos.get(String(a.entity_id)) ?? null)
          : a.entity === "investigation"
            ? (invRefs.get(String(a.entity_id)) ?? null)
            : a.entity === "defect" && deletedIds.has(String(a.entity_id))
              ? DELETED_DEFECT
              : null,
    })),
  };
}

/** A coil, plate, slab or heat id → the heat's history, with what the id was. */
export function trace(db: Db, q: string): Trace {
  const sqlite = db.$client;
  const id = q.trim().toUpperCase();
  const product = sqlite
    .prepare(
      "select p.*, s.slab_id as slabCode, h.heat_no from products p join slabs s on s.id = p.slab_id join heats h on h.id = s.heat_id where p.product_id = ?",
    )
    .get(id) as Row | undefined;
  if (product) {
    return {
      query: q,
      found: product.kind === "plate" ? "plate" : "coil",
      product: { productId: product.product_id, kind: product.kind, rolledAt: iso(product.rolled_at), weightT: product.weight_t ?? null },
      slabId: product.slabCode,
      history: heatHistory(db, product.heat_no),
    };
  }
  const slab = sqlite.prepare("select s.slab_id, h.heat_no from slabs s join heats h on h.id = s.heat_id where s.slab_id = ?").get(id) as Row | undefined;
  if (slab) return { query: q, found: "slab", product: null, slabId: slab.slab_id, history: heatHistory(db, slab.heat_no) };
  const heat = sqlite.prepare("select heat_no from heats where heat_no = ?").pluck().get(id) as string | undefined;
  if (heat) return { query: q, found: "heat", product: null, slabId: null, history: heatHistory(db, heat) };
  throw notFound(said("claims.nothingCalled", { id }));
}

// ---------------------------------------------------------------------------------------------
// The workbook
// ---------------------------------------------------------------------------------------------

/** Thumbnails embedded per defect; the rest are counted and open from the app. */
const MAX_THUMBS = 3;
const date = (s: string | null) => (s ? new Date(s) : null);
/** A stored source → its word's key ("heat record" is how the heat's own values name theirs). */
const SOURCE_KEYS: Record<string, string> = { slab: "slab", samples: "samples", heat: "heat", "heat record": "heat", computed: "computed", given: "given" };

/** The history's tables: headers wrap, widths follow the header within bounds, the filter spans every row. */
const TABLE_LOOK: TableLook = { width: (header) => Math.max(11, Math.min(40, header.length + 2)), filter: "rows", wrapHeader: true };

function table(wb: ExcelJS.Workbook, name: string, columns: Col[], rows: Record<string, unknown>[], title: string, t: TFunction) {
  const ws = addTableSheet(wb, name, columns, rows, TABLE_LOOK);
  printSetup(ws, title, t);
  return ws;
}

function printSetup(ws: ExcelJS.Worksheet, title: string, t: TFunction) {
  ws.pageSetup = {
    paperSize: 9,
    orientation: "landscape",
    fitToPage: true,
    fitToWidth: 1,
    fitToHeight: 0,
    printTitlesRow: "1:1",
    margins: { left: 0.5, right: 0.5, top: 0.7, bottom: 0.7, header: 0.3, footer: 0.3 },
  };
  ws.headerFooter = { oddHeader: `&L${title.replace(/&/g, "&&")}&R&A`, oddFooter: `&LStrandsight&R${t("server:history.pageOf")}` };
}

export interface WorkbookOptions {
  baseUrl: string;
  uploadDir: string;
  by: string;
  /**
   * The language of the person asking (English where none). The audit trail's sentences come made
   * in `hist`: make it with the same language (HistoryOptions.language).
   */
  language?: Language | null;
}

export async function historyWorkbook(db: Db, hist: HeatHistory, opts: WorkbookOptions): Promise<Buffer> {
  const wb = await newWorkbook(new Date(hist.generatedAt));
  const t = translator(opts.language);
  /** The workbook's words in the asker's language (server:history.*). */
  const w = (key: string, values?: Record<string, unknown>) => t(`server:history.${key}`, values ?? {});
  const term = (list: string, key: unknown) => t(`common:terms.${list}.${String(key)}`, { defaultValue: String(key) });
  const source = (s: string | null) => (s ? (SOURCE_KEYS[s] ? w(`sources.${SOURCE_KEYS[s]}`) : s) : null);
  const yes = w("yes");
  const h = hist.heat;
  const ed = hist.edition;
  const customer = ed.kind === "customer";
  const on = (x: HistorySection) => ed.sections.includes(x);
  const title = ed.cover ? w("titleForClaim", { heat: h.heatNo, claim: ed.cover.claimNo }) : w("title", { heat: h.heatNo });
  const link = (p: string) => new URL(p, opts.baseUrl).toString();
  // The customer edition carries no links into the application (the customer has no account).
  const linked = (text: string, p: string) => (customer ? text : { text, hyperlink: link(p) });

  const sheetOf = (name: string) =>
    addItemSheet(wb, name, { item: { header: w("headers.item"), width: 32 }, value: { header: w("headers.value"), width: 70 }, wrapValues: true });

  // The cover page: what the document is, for which claim, when and by whom.
  if (ed.cover) {
    const c = ed.cover;
    const { ws, add } = sheetOf(w("sheets.cover"));
    const minute = (iso: string) => iso.slice(0, 16).replace("T", " ");
    add(w("cover.document"), w("cover.documentValue", { heat: h.heatNo, claim: c.claimNo }));
    add(w("cover.edition"), customer ? w("cover.forCustomer") : w("cover.internal"));
    add(w("cover.claim"), c.claimNo);
    add(w("cover.customer"), c.customer);
    add(w("cover.received"), c.receivedOn);
    add(w("cover.defectComplained"), c.defectComplained);
    if (c.quantityT !== null) add(w("cover.quantity"), c.quantityT, D2);
    add(w("cover.products"), c.products.join(", ") || "—");
    if (c.otherProducts.length) add(w("cover.otherProducts"), w("cover.notFromThisHeat", { products: c.otherProducts.join(", ") }));
    add(w("cover.slabs"), c.slabs.join(", "));
    add(
      w("cover.heatCast"),
      h.castEnd ? w("cover.castFromTo", { from: minute(h.castStart), to: minute(h.castEnd) }) : w("cover.castFrom", { from: minute(h.castStart) }),
    );
    add(w("cover.contents"), ed.sections.map((x) => term("historySections", x)).join(", "));
    add(w("cover.prepared"), date(hist.generatedAt), DT);
    add(w("cover.preparedBy"), c.preparedBy || "—");
    printSetup(ws, title, t);
  }

  // Summary
  const { ws: sum, add } = sheetOf(w("sheets.summary"));
  const worst = hist.slabs.map((s) => s.disposition).filter(Boolean) as string[];
  add(w("summary.heat"), h.heatNo);
  add(w("summary.sequence"), h.sequenceNo ? w("summary.sequenceValue", { sequence: h.sequenceNo, position: h.sequencePosition ?? "?" }) : "—");
  add(w("summary.caster"), h.caster);
  add(w("summary.grade"), w("summary.gradeValue", { grade: h.grade, name: h.gradeName, family: h.family }));
  add(w("summary.castStart"), date(h.castStart), DT);
  add(w("summary.castEnd"), date(h.castEnd), DT);
  add(w("summary.ladleWeight"), h.ladleWeightT, D1);
  if (on("slabs")) add(w("summary.slabs"), hist.slabs.length, N0);
  if (on("slabs") && on("dispositions")) {
    add(
      w("summary.dispositions"),
      worst.length
        ? Object.entries(worst.reduce<Record<string, number>>((m, d) => ((m[d] = (m[d] ?? 0) + 1), m), {}))
            .map(([d, c]) => `${term("dispositions", d)}: ${c}`)
            .join(", ")
        : w("summary.noneRecorded"),
    );
  }
  if (on("defects")) add(customer ? w("summary.defects") : w("summary.defectsLive"), hist.defects.length, N0);
  if (on("slabs") && !customer)
    add(
      w("summary.productsTraced"),
      hist.slabs.reduce((n, s) => n + s.products.length, 0),
      N0,
    );
  if (on("investigations")) add(customer ? w("summary.investigationsHeat") : w("summary.investigationsHeatOrSequence"), hist.investigations.length, N0);
  if (on("claims")) add(w("summary.claims"), hist.claims.length, N0);
  if (on("samples") && hist.samples) add(w("summary.samples"), hist.samples.count, N0);
  if (!customer) add(w("summary.open"), linked(link(`/heats/${encodeURIComponent(h.heatNo)}`), `/heats/${encodeURIComponent(h.heatNo)}`));
  add(customer ? w("summary.prepared") : w("summary.generated"), date(hist.generatedAt), DT);
  if (!customer) add(w("summary.generatedBy"), opts.by);
  add(w("summary.times"), "UTC");
  add(w("summary.caution"), w("summary.cautionText"));
  printSetup(sum, title, t);

  if (on("chemistry")) {
    table(
      wb,
      w("sheets.chemistry"),
      [
        { header: w("headers.element"), key: "element", width: 22 },
        { header: w("headers.content"), key: "value", numFmt: D4 },
        { header: w("headers.unit"), key: "unit" },
      ],
      h.chemistry.filter((c) => c.value != null).map((c) => ({ ...c, element: w(`elements.${c.key}`) })),
      title,
      t,
    );
  }

  // Casting conditions: the heat's own values, then each slab's resolved values with their sources.
  if (on("conditions")) {
    const condCols: Col[] = [
      { header: w("headers.level"), key: "level" },
      { header: w("headers.slab"), key: "slab", width: 16 },
      ...SLAB_CONDITIONS.flatMap((c) => [
        { header: w("conditionHeader", { label: w(`conditions.${c.key}`), unit: c.unit }), key: c.key, numFmt: c.key === "casting_speed_m_min" ? D3 : D1 },
        { header: w("conditionSource", { label: w(`conditions.${c.key}`) }), key: `${c.key}__src`, width: 16 },
      ]),
    ];
    const heatRow: Record<string, unknown> = { level: w("levels.heat"), slab: w("levels.wholeHeat") };
    for (const c of h.conditions) {
      heatRow[c.key] = c.value;
      heatRow[`${c.key}__src`] = source(c.source);
    }
    table(
      wb,
      w("sheets.conditions"),
      condCols,
      [
        heatRow,
        ...(on("slabs") ? hist.slabs : []).map((s) => {
          const r: Record<string, unknown> = { level: w("levels.slab"), slab: s.slabId };
          for (const c of s.conditions) {
            r[c.key] = c.value;
            r[`${c.key}__src`] = source(c.source);
          }
          return r;
        }),
      ],
      title,
      t,
    );
  }

  // Process samples of the heat's strands during its cast (the internal edition only).
  const sqlite = db.$client;
  if (on("samples")) {
    const heatRow2 = sqlite.prepare("select id, cast_start, cast_end from heats where heat_no = ?").get(h.heatNo) as Row;
    const samples = sqlite
      .prepare(
        `select st.strand_no, p.* from process_samples p join strands st on st.id = p.strand_id
         where p.strand_id in (select distinct strand_id from slabs where heat_id = ?) and p.sampled_at between ? and ? order by st.strand_no, p.sampled_at`,
      )
      .all(heatRow2.id, heatRow2.cast_start, heatRow2.cast_end ?? heatRow2.cast_start + 4 * 3600_000) as Row[];
    table(
      wb,
      w("sheets.samples"),
      [
        { header: w("headers.strand"), key: "strand_no" },
        { header: w("headers.timeUtc"), key: "time", numFmt: DT, width: 18 },
        { header: w("headers.castLength"), key: "cast_length_m", numFmt: D2 },
        { header: w("headers.castingSpeed"), key: "casting_speed_m_min", numFmt: D3 },
        { header: w("headers.tundishTemp"), key: "tundish_temp_c", numFmt: D1 },
        { header: w("headers.embrCurrent"), key: "embr_current_a", numFmt: D1 },
        { header: w("headers.senDepth"), key: "sen_depth_mm", numFmt: D1 },
        { header: w("headers.argon"), key: "argon_nl_min", numFmt: D2 },
        { header: w("headers.moldLevel"), key: "mold_level_mm", numFmt: D2 },
      ],
      samples.map((s) => ({ ...s, time: new Date(s.sampled_at) })),
      title,
      t,
    );
  }

  if (on("slabs")) {
    table(
      wb,
      w("sheets.slabs"),
      [
        { header: w("headers.slab"), key: "slabId", width: 16 },
        { header: w("headers.strand"), key: "strand" },
        { header: w("headers.piece"), key: "pieceNo" },
        { header: w("headers.lengthMm"), key: "lengthMm", numFmt: N0 },
        { header: w("headers.widthMm"), key: "widthMm", numFmt: N0 },
        { header: w("headers.thicknessMm"), key: "thicknessMm", numFmt: N0 },
        { header: w("headers.weightT"), key: "weightT", numFmt: D2 },
        { header: w("headers.castAt"), key: "castAt", numFmt: DT, width: 18 },
        { header: w("headers.transition"), key: "transition" },
        ...(on("dispositions") ? [{ header: w("headers.disposition"), key: "disposition", width: 14 }] : []),
        { header: w("headers.defects"), key: "defects", numFmt: N0 },
        { header: customer ? w("headers.productsOfClaim") : w("headers.products"), key: "products", width: 24 },
      ],
      hist.slabs.map((s) => ({
        ...s,
        castAt: date(s.castAt),
        transition: s.transition ? yes : w("no"),
        disposition: s.disposition ? term("dispositions", s.disposition) : null,
        products: s.products.join(", "),
      })),
      title,
      t,
    );
  }

  // Defects, with up to three photo thumbnails embedded each (links to the full photos) and a link to the slab.
  if (on("defects")) {
    const photoSlots = on("photos") ? Math.min(MAX_THUMBS, Math.max(0, ...hist.defects.map((d) => d.photos.length))) : 0;
    const defCols: Col[] = [
      customer ? { header: w("headers.no"), key: "id" } : { header: w("headers.defectId"), key: "id" },
      { header: w("headers.slab"), key: "slab", width: 18 },
      { header: w("headers.type"), key: "type" },
      { header: w("headers.typeName"), key: "typeName", width: 26 },
      { header: w("headers.face"), key: "face", width: 14 },
      { header: w("headers.fromHead"), key: "positionAlongMm", numFmt: N0 },
      { header: w("headers.across"), key: "positionAcrossMm", numFmt: N0 },
      { header: w("headers.lengthMm"), key: "lengthMm", numFmt: N0 },
      { header: w("headers.widthMm"), key: "widthMm", numFmt: N0 },
      { header: w("headers.depthMm"), key: "depthMm", numFmt: D1 },
      { header: w("headers.severity"), key: "severity", width: 14 },
      { header: w("headers.foundAt"), key: "stage", width: 14 },
      ...(on("dispositions") ? [{ header: w("headers.disposition"), key: "disposition", width: 12 }] : []),
      ...(customer ? [] : [{ header: w("headers.review"), key: "reviewStatus" }]),
      { header: w("headers.foundUtc"), key: "foundAt", numFmt: DT, width: 18 },
      ...(customer
        ? []
        : [
            { header: w("headers.loggedBy"), key: "loggedBy", width: 24 },
            { header: w("headers.note"), key: "note", width: 36 },
          ]),
      ...(on("causes") ? [{ header: customer ? w("headers.causes") : w("headers.causesLive"), key: "causes", width: 26 }] : []),
      ...(on("photos") ? [{ header: w("headers.photos"), key: "photoCount" }] : []),
      ...Array.from({ length: photoSlots }, (_, k) => ({ header: w("headers.photoN", { n: k + 1 }), key: `photo${k}`, width: 16 })),
    ];
    const defWs = table(
      wb,
      w("sheets.defects"),
      defCols,
      hist.defects.map((d) => ({
        ...d,
        slab: linked(d.slabId, `/slabs/${encodeURIComponent(d.slabId)}`),
        face: term("faces", d.face),
        severity: `${d.severity} ${t(`common:terms.severities.${d.severity}`, { defaultValue: "" })}`.trim(),
        stage: term("stages", d.stage),
        disposition: d.disposition ? term("dispositions", d.disposition) : null,
        foundAt: date(d.foundAt),
        causes: d.causes.join(", "),
        photoCount: d.photos.length,
      })),
      title,
      t,
    );
    const firstPhotoCol = defCols.findIndex((c) => c.key === "photo0");
    const thumbOf = sqlite.prepare("select thumb_file from defect_photos where id = ?").pluck();
    hist.defects.forEach((d, i) => {
      d.photos.slice(0, photoSlots).forEach((p, k) => {
        const file = thumbOf.get(p.id) as string | undefined;
        const full = file ? path.join(opts.uploadDir, file) : null;
        if (!full || !fs.existsSync(full)) return;
        const img = wb.addImage({ buffer: fs.readFileSync(full) as never, extension: "jpeg" });
        const row = defWs.getRow(i + 2);
        row.height = 62;
        defWs.addImage(img, { tl: { col: firstPhotoCol + k, row: i + 1 }, ext: { width: 100, height: 75 }, editAs: "oneCell" } as never);
        row.getCell(firstPhotoCol + k + 1).value = customer ? w("photoN", { n: k + 1 }) : { text: w("openPhoto"), hyperlink: link(p.url) };
      });
    });
  }

  if (on("causes")) {
    table(
      wb,
      w("sheets.causes"),
      [
        { header: customer ? w("headers.defectNo") : w("headers.defectId"), key: "defectId" },
        { header: w("headers.slab"), key: "slabId", width: 16 },
        ...(customer ? [] : [{ header: w("headers.causeTag"), key: "tag", width: 24 }]),
        { header: w("headers.cause"), key: "tagName", width: 28 },
        { header: w("headers.confidence"), key: "confidence" },
        ...(customer
          ? [{ header: w("headers.taggedUtc"), key: "at", numFmt: DT, width: 18 }]
          : [
              { header: w("headers.note"), key: "note", width: 36 },
              { header: w("headers.taggedBy"), key: "by", width: 24 },
              { header: w("headers.taggedUtc"), key: "at", numFmt: DT, width: 18 },
              { header: w("headers.removedUtc"), key: "removedAt", numFmt: DT, width: 18 },
              { header: w("headers.removedBy"), key: "removedBy", width: 24 },
            ]),
      ],
      hist.causes.map((c) => ({ ...c, at: date(c.at), removedAt: date(c.removedAt) })),
      title,
      t,
    );
  }

  if (on("investigations")) {
    table(
      wb,
      w("sheets.investigations"),
      [
        { header: w("headers.reference"), key: "ref", width: 14 },
        { header: w("headers.title"), key: "title", width: 40 },
        { header: w("headers.status"), key: "status" },
        { header: w("headers.openedUtc"), key: "openedAt", numFmt: DT, width: 18 },
        { header: w("headers.closedUtc"), key: "closedAt", numFmt: DT, width: 18 },
        { header: w("headers.confirmedCause"), key: "confirmedCause", width: 26 },
        ...(customer
          ? []
          : [
              { header: w("headers.owner"), key: "owner", width: 24 },
              { header: w("headers.onThisHeat"), key: "sameHeat" },
            ]),
      ],
      hist.investigations.map((i) => ({
        ...i,
        status: t(`common:terms.investigationStatus.${i.status}`, { defaultValue: i.status }),
        openedAt: date(i.openedAt),
        closedAt: date(i.closedAt),
        sameHeat: i.sameHeat ? yes : w("noSameSequence"),
      })),
      title,
      t,
    );
  }

  if (on("claims")) {
    table(
      wb,
      w("sheets.claims"),
      [
        { header: w("headers.claim"), key: "claimNo", width: 14 },
        { header: w("headers.customer"), key: "customer", width: 28 },
        { header: w("headers.received"), key: "receivedOn", width: 12 },
        { header: w("headers.defectComplained"), key: "defectComplained", width: 36 },
        { header: w("headers.quantityT"), key: "quantityT", numFmt: D2 },
        { header: w("headers.status"), key: "status" },
        { header: w("headers.onThisHeat"), key: "sameHeat" },
        { header: w("headers.slabsOfHeat"), key: "slabs", width: 30 },
      ],
      // Statuses in the screens' words ("Under review"), not as stored.
      hist.claims.map((c) => ({
        ...c,
        status: t(`common:terms.claimStatus.${c.status}`, { defaultValue: c.status }),
        sameHeat: c.sameHeat ? yes : w("noSameSequence"),
        slabs: c.slabs.join(", "),
      })),
      title,
      t,
    );
  }

  if (on("audit")) {
    table(
      wb,
      customer ? w("sheets.recordOfChanges") : w("sheets.auditTrail"),
      [
        { header: w("headers.whenUtc"), key: "at", numFmt: DT, width: 18 },
        ...(customer ? [] : [{ header: w("headers.who"), key: "by", width: 24 }]),
        { header: w("headers.what"), key: "what", width: 90 },
      ],
      hist.audit.map((a) => ({ ...a, at: date(a.at) })),
      title,
      t,
    );
  }

  return workbookBuffer(wb);
}
