/**
 * A heat's whole history — chemistry, conditions (heat-level and per slab with their sources),
 * slabs, defects with photos and causes, investigations, claims on the heat or its sequence, the
 * audit trail — as JSON (the trace screen, the printable view) and as a workbook (exceljs) whose
 * cells are the same values. The trace resolves a coil, plate, slab or heat id to its heat.
 */
import fs from "node:fs";
import path from "node:path";
import type ExcelJS from "exceljs";
import { loadExcelJS } from "../lib/lazy-packages";
import type { HeatHistory, Trace } from "@shared/api/claims";
import { DISPOSITION_LABELS, FACE_LABELS, SEVERITY_LABELS, STAGE_LABELS, type Disposition, type Face, type Severity, type Stage } from "@shared/domain";
import { VARIABLES } from "@shared/variables";
import type { Db } from "../db/client";
import { guardSheet } from "../lib/cells";
import { notFound } from "../lib/http-error";

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
  ["c_pct", "Carbon (C)", "wt %"], ["si_pct", "Silicon (Si)", "wt %"], ["mn_pct", "Manganese (Mn)", "wt %"], ["p_pct", "Phosphorus (P)", "wt %"],
  ["s_pct", "Sulphur (S)", "wt %"], ["al_pct", "Aluminium (Al)", "wt %"], ["cu_pct", "Copper (Cu)", "wt %"], ["ni_pct", "Nickel (Ni)", "wt %"],
  ["cr_pct", "Chromium (Cr)", "wt %"], ["mo_pct", "Molybdenum (Mo)", "wt %"], ["ti_pct", "Titanium (Ti)", "wt %"], ["nb_pct", "Niobium (Nb)", "wt %"],
  ["v_pct", "Vanadium (V)", "wt %"], ["n_ppm", "Nitrogen (N)", "ppm"],
];

const inList = (ids: number[]) => (ids.length ? `(${ids.map((x) => Math.trunc(x)).join(",")})` : "(null)");

export function heatHistory(db: Db, heatNo: string): HeatHistory {
  const sqlite = db.$client;
  const h = sqlite
    .prepare(
      `select h.*, q.sequence_no as sequenceNo, ca.code as casterCode, g.code as gradeCode, g.name as gradeName, f.code as familyCode
       from heats h left join sequences q on q.id = h.sequence_id join casters ca on ca.id = h.caster_id join grades g on g.id = h.grade_id join grade_families f on f.id = g.family_id
       where h.heat_no = ?`,
    )
    .get(heatNo.trim().toUpperCase()) as Row | undefined;
  if (!h) throw notFound(`There is no heat ${heatNo} on record.`);

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
  const photos = sqlite.prepare(`select id, defect_id from defect_photos where deleted_at is null and defect_id in ${inList(defectIds)} order by created_at, id`).all() as Row[];
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
    ? (sqlite.prepare(`select count(*) from process_samples where strand_id in ${inList(strands)} and sampled_at between ? and ?`).pluck().get(h.cast_start, end) as number)
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
       where (a.entity = 'defect' and a.entity_id in (${defectIds.map((d) => `'${d}'`).join(",") || "null"}))
          or (a.entity = 'investigation' and a.entity_id in (${investigations.filter((i) => i.sameHeat).map((i) => `'${i.id}'`).join(",") || "null"}))
          or (a.entity = 'claim' and a.entity_id in (${claims.filter((c) => c.sameHeat).map((c) => `'${c.id}'`).join(",") || "null"}))
          or (a.entity = 'defect_selection' and a.entity_id = @heatNo)
       order by a.at, a.id`,
    )
    .all({ heatNo: h.heat_no }) as Row[];

  const live = new Map<number, string[]>();
  for (const c of causes) if (c.removed_at == null) live.set(c.defect_id, [...(live.get(c.defect_id) ?? []), c.code]);
  const photosOf = new Map<number, HeatHistory["defects"][number]["photos"]>();
  for (const p of photos) photosOf.set(p.defect_id, [...(photosOf.get(p.defect_id) ?? []), { id: p.id, url: `/api/photos/${p.id}`, thumbUrl: `/api/photos/${p.id}/thumb` }]);
  const json = (v: unknown) => (v == null ? null : typeof v === "string" ? v : JSON.stringify(v));

  return {
    generatedAt: new Date().toISOString(),
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
      conditions: HEAT_CONDITIONS.map((c) => ({ key: c.key, label: c.label, unit: c.unit, value: shown(c.key, h[c.col]), source: c.source ? (h[c.source] ?? null) : h[c.col] == null ? null : "heat record" })),
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
      id: d.id, slabId: d.slabCode, type: d.typeCode, typeName: d.typeName, face: d.face, positionAlongMm: d.position_along_mm, positionAcrossMm: d.position_across_mm,
      lengthMm: d.length_mm, widthMm: d.width_mm, depthMm: d.depth_mm, severity: d.severity, stage: d.stage, disposition: d.disposition, reviewStatus: d.review_status,
      foundAt: iso(d.found_at)!, loggedBy: d.byName ?? null, note: d.note ?? null, causes: live.get(d.id) ?? [], photos: photosOf.get(d.id) ?? [],
    })),
    causes: causes.map((c) => ({ defectId: c.defect_id, slabId: c.slabCode, tag: c.code, tagName: c.name, confidence: c.confidence, note: c.note ?? null, by: c.byName ?? null, at: iso(c.created_at)!, removedAt: iso(c.removed_at), removedBy: c.removedByName ?? null })),
    samples: { count: sampleCount, strands: [...new Set(slabs.map((s) => s.strand_no as number))] },
    investigations: investigations.map((i) => ({ id: i.id, ref: i.ref, title: i.title, status: i.status, openedAt: iso(i.opened_at)!, closedAt: iso(i.closed_at), confirmedCause: i.causeName ?? null, owner: i.ownerName ?? null, sameHeat: Boolean(i.sameHeat) })),
    claims: claims.map((c) => ({ id: c.id, claimNo: c.claim_no, customer: c.customer, receivedOn: c.received_on, defectComplained: c.defect_complained, status: c.status, quantityT: c.quantity_t ?? null, sameHeat: Boolean(c.sameHeat), slabs: c.slabCodes ? String(c.slabCodes).split(",") : [] })),
    audit: audit.map((a) => ({ at: iso(a.at)!, by: a.byName ?? null, action: a.action, entity: a.entity, entityId: a.entity_id ?? null, before: json(a.before), after: json(a.after) })),
  };
}

/** A coil, plate, slab or heat id → the heat's history, with what the id was. */
export function trace(db: Db, q: string): Trace {
  const sqlite = db.$client;
  const id = q.trim().toUpperCase();
  const product = sqlite.prepare("select p.*, s.slab_id as slabCode, h.heat_no from products p join slabs s on s.id = p.slab_id join heats h on h.id = s.heat_id where p.product_id = ?").get(id) as Row | undefined;
  if (product) {
    return { query: q, found: product.kind === "plate" ? "plate" : "coil", product: { productId: product.product_id, kind: product.kind, rolledAt: iso(product.rolled_at), weightT: product.weight_t ?? null }, slabId: product.slabCode, history: heatHistory(db, product.heat_no) };
  }
  const slab = sqlite.prepare("select s.slab_id, h.heat_no from slabs s join heats h on h.id = s.heat_id where s.slab_id = ?").get(id) as Row | undefined;
  if (slab) return { query: q, found: "slab", product: null, slabId: slab.slab_id, history: heatHistory(db, slab.heat_no) };
  const heat = sqlite.prepare("select heat_no from heats where heat_no = ?").pluck().get(id) as string | undefined;
  if (heat) return { query: q, found: "heat", product: null, slabId: null, history: heatHistory(db, heat) };
  throw notFound(`Nothing on record is called ${id}: no coil or plate (rolling-mill trace), slab or heat. Check the id, or import the rolling mill's coil list.`);
}

// ---------------------------------------------------------------------------------------------
// The workbook
// ---------------------------------------------------------------------------------------------

type Col = { header: string; key: string; width?: number; numFmt?: string };
/** Thumbnails embedded per defect; the rest are counted and open from the app. */
const MAX_THUMBS = 3;
const DT = "yyyy-mm-dd hh:mm";
const N0 = "#,##0";
const D1 = "0.0";
const D2 = "0.00";
const D3 = "0.000";
const D4 = "0.0000";
const date = (s: string | null) => (s ? new Date(s) : null);
const SOURCE_WORDS: Record<string, string> = { slab: "slab record", samples: "process samples", heat: "heat record", computed: "computed", given: "given" };
const source = (s: string | null) => (s ? (SOURCE_WORDS[s] ?? s) : null);

function table(wb: ExcelJS.Workbook, name: string, columns: Col[], rows: Record<string, unknown>[], title: string) {
  const ws = wb.addWorksheet(name, { views: [{ state: "frozen", ySplit: 1 }] });
  ws.columns = columns.map((c) => ({ header: c.header, key: c.key, width: c.width ?? Math.max(11, Math.min(40, c.header.length + 2)), style: c.numFmt ? { numFmt: c.numFmt } : {} }));
  ws.getRow(1).font = { bold: true };
  ws.getRow(1).alignment = { vertical: "middle", wrapText: true };
  for (const r of rows) ws.addRow(Object.fromEntries(columns.map((c) => [c.key, r[c.key] ?? null])));
  ws.autoFilter = { from: { row: 1, column: 1 }, to: { row: Math.max(1, rows.length + 1), column: columns.length } };
  printSetup(ws, title);
  return ws;
}

function printSetup(ws: ExcelJS.Worksheet, title: string) {
  ws.pageSetup = { paperSize: 9, orientation: "landscape", fitToPage: true, fitToWidth: 1, fitToHeight: 0, printTitlesRow: "1:1", margins: { left: 0.5, right: 0.5, top: 0.7, bottom: 0.7, header: 0.3, footer: 0.3 } };
  ws.headerFooter = { oddHeader: `&L${title.replace(/&/g, "&&")}&R&A`, oddFooter: "&LStrandsight&RPage &P of &N" };
}

export interface WorkbookOptions {
  baseUrl: string;
  uploadDir: string;
  by: string;
}

export async function historyWorkbook(db: Db, hist: HeatHistory, opts: WorkbookOptions): Promise<Buffer> {
  const wb = new (await loadExcelJS()).Workbook();
  wb.creator = "Strandsight";
  wb.created = new Date(hist.generatedAt);
  const h = hist.heat;
  const title = `Heat ${h.heatNo} — history`;
  const link = (p: string) => new URL(p, opts.baseUrl).toString();

  // Summary
  const sum = wb.addWorksheet("Summary", { views: [{ state: "frozen", ySplit: 1 }] });
  sum.columns = [
    { header: "Item", key: "k", width: 30 },
    { header: "Value", key: "v", width: 70 },
  ];
  sum.getRow(1).font = { bold: true };
  const worst = hist.slabs.map((s) => s.disposition).filter(Boolean) as string[];
  const add = (k: string, v: unknown, numFmt?: string) => {
    const row = sum.addRow({ k, v });
    if (numFmt) row.getCell(2).numFmt = numFmt;
    row.getCell(2).alignment = { horizontal: "left", wrapText: true };
  };
  add("Heat", h.heatNo);
  add("Sequence", h.sequenceNo ? `${h.sequenceNo} (heat ${h.sequencePosition ?? "?"} of the sequence)` : "—");
  add("Caster", h.caster);
  add("Grade", `${h.grade} ${h.gradeName} (family ${h.family})`);
  add("Cast start", date(h.castStart), DT);
  add("Cast end", date(h.castEnd), DT);
  add("Ladle weight (t)", h.ladleWeightT, D1);
  add("Slabs", hist.slabs.length, N0);
  add("Slab dispositions", worst.length ? Object.entries(worst.reduce<Record<string, number>>((m, d) => ((m[d] = (m[d] ?? 0) + 1), m), {})).map(([d, c]) => `${DISPOSITION_LABELS[d as Disposition] ?? d}: ${c}`).join(", ") : "none recorded");
  add("Defects (live)", hist.defects.length, N0);
  add("Coils and plates traced", hist.slabs.reduce((n, s) => n + s.products.length, 0), N0);
  add("Investigations (this heat or sequence)", hist.investigations.length, N0);
  add("Claims (this heat or sequence)", hist.claims.length, N0);
  add("Process samples in the cast window", hist.samples.count, N0);
  add("Open in Strandsight", { text: link(`/heats/${encodeURIComponent(h.heatNo)}`), hyperlink: link(`/heats/${encodeURIComponent(h.heatNo)}`) });
  add("Generated", date(hist.generatedAt), DT);
  add("Generated by", opts.by);
  add("Times", "UTC");
  add("Caution", "This record states what was cast, found and decided. Dispositions and claims follow the plant's quality procedures and the customer's specification.");
  printSetup(sum, title);

  table(wb, "Chemistry", [
    { header: "Element", key: "element", width: 22 },
    { header: "Content", key: "value", numFmt: D4 },
    { header: "Unit", key: "unit" },
  ], h.chemistry.filter((c) => c.value != null), title);

  // Casting conditions: the heat's own values, then each slab's resolved values with their sources.
  const condCols: Col[] = [
    { header: "Level", key: "level" },
    { header: "Slab", key: "slab", width: 16 },
    ...SLAB_CONDITIONS.flatMap((c) => [
      { header: `${c.label} (${c.unit})`, key: c.key, numFmt: c.key === "casting_speed_m_min" ? D3 : D1 },
      { header: `${c.label}: source`, key: `${c.key}__src`, width: 16 },
    ]),
  ];
  const heatRow: Record<string, unknown> = { level: "heat", slab: "(whole heat)" };
  for (const c of h.conditions) {
    heatRow[c.key] = c.value;
    heatRow[`${c.key}__src`] = source(c.source);
  }
  table(wb, "Casting conditions", condCols, [
    heatRow,
    ...hist.slabs.map((s) => {
      const r: Record<string, unknown> = { level: "slab", slab: s.slabId };
      for (const c of s.conditions) {
        r[c.key] = c.value;
        r[`${c.key}__src`] = source(c.source);
      }
      return r;
    }),
  ], title);

  // Process samples of the heat's strands during its cast.
  const sqlite = db.$client;
  const heatRow2 = sqlite.prepare("select id, cast_start, cast_end from heats where heat_no = ?").get(h.heatNo) as Row;
  const samples = sqlite
    .prepare(
      `select st.strand_no, p.* from process_samples p join strands st on st.id = p.strand_id
       where p.strand_id in (select distinct strand_id from slabs where heat_id = ?) and p.sampled_at between ? and ? order by st.strand_no, p.sampled_at`,
    )
    .all(heatRow2.id, heatRow2.cast_start, heatRow2.cast_end ?? heatRow2.cast_start + 4 * 3600_000) as Row[];
  table(wb, "Process samples", [
    { header: "Strand", key: "strand_no" },
    { header: "Time (UTC)", key: "time", numFmt: DT, width: 18 },
    { header: "Cast length (m)", key: "cast_length_m", numFmt: D2 },
    { header: "Casting speed (m/min)", key: "casting_speed_m_min", numFmt: D3 },
    { header: "Tundish temperature (°C)", key: "tundish_temp_c", numFmt: D1 },
    { header: "EMBr current (A)", key: "embr_current_a", numFmt: D1 },
    { header: "SEN depth (mm)", key: "sen_depth_mm", numFmt: D1 },
    { header: "Argon (NL/min)", key: "argon_nl_min", numFmt: D2 },
    { header: "Mold level (mm)", key: "mold_level_mm", numFmt: D2 },
  ], samples.map((s) => ({ ...s, time: new Date(s.sampled_at) })), title);

  table(wb, "Slabs", [
    { header: "Slab", key: "slabId", width: 16 },
    { header: "Strand", key: "strand" },
    { header: "Piece", key: "pieceNo" },
    { header: "Length (mm)", key: "lengthMm", numFmt: N0 },
    { header: "Width (mm)", key: "widthMm", numFmt: N0 },
    { header: "Thickness (mm)", key: "thicknessMm", numFmt: N0 },
    { header: "Weight (t)", key: "weightT", numFmt: D2 },
    { header: "Cast at (UTC)", key: "castAt", numFmt: DT, width: 18 },
    { header: "Transition slab", key: "transition" },
    { header: "Disposition", key: "disposition", width: 14 },
    { header: "Defects", key: "defects", numFmt: N0 },
    { header: "Coils / plates", key: "products", width: 24 },
  ], hist.slabs.map((s) => ({ ...s, castAt: date(s.castAt), transition: s.transition ? "yes" : "no", disposition: s.disposition ? (DISPOSITION_LABELS[s.disposition as Disposition] ?? s.disposition) : null, products: s.products.join(", ") })), title);

  // Defects, with up to three photo thumbnails embedded each (links to the full photos) and a link to the slab.
  const photoSlots = Math.min(MAX_THUMBS, Math.max(0, ...hist.defects.map((d) => d.photos.length)));
  const defCols: Col[] = [
    { header: "Defect id", key: "id" },
    { header: "Slab", key: "slab", width: 18 },
    { header: "Type", key: "type" },
    { header: "Type name", key: "typeName", width: 26 },
    { header: "Face", key: "face", width: 14 },
    { header: "From head end (mm)", key: "positionAlongMm", numFmt: N0 },
    { header: "Across (mm)", key: "positionAcrossMm", numFmt: N0 },
    { header: "Length (mm)", key: "lengthMm", numFmt: N0 },
    { header: "Width (mm)", key: "widthMm", numFmt: N0 },
    { header: "Depth (mm)", key: "depthMm", numFmt: D1 },
    { header: "Severity", key: "severity", width: 14 },
    { header: "Found at", key: "stage", width: 14 },
    { header: "Disposition", key: "disposition", width: 12 },
    { header: "Review", key: "reviewStatus" },
    { header: "Found (UTC)", key: "foundAt", numFmt: DT, width: 18 },
    { header: "Logged by", key: "loggedBy", width: 24 },
    { header: "Note", key: "note", width: 36 },
    { header: "Causes (live)", key: "causes", width: 26 },
    { header: "Photos", key: "photoCount" },
    ...Array.from({ length: photoSlots }, (_, k) => ({ header: `Photo ${k + 1}`, key: `photo${k}`, width: 16 })),
  ];
  const defWs = table(wb, "Defects", defCols, hist.defects.map((d) => ({
    ...d,
    slab: { text: d.slabId, hyperlink: link(`/slabs/${encodeURIComponent(d.slabId)}`) },
    face: FACE_LABELS[d.face as Face] ?? d.face,
    severity: `${d.severity} ${SEVERITY_LABELS[d.severity as Severity] ?? ""}`.trim(),
    stage: STAGE_LABELS[d.stage as Stage] ?? d.stage,
    disposition: DISPOSITION_LABELS[d.disposition as Disposition] ?? d.disposition,
    foundAt: date(d.foundAt),
    causes: d.causes.join(", "),
    photoCount: d.photos.length,
  })), title);
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
      row.getCell(firstPhotoCol + k + 1).value = { text: "open photo", hyperlink: link(p.url) };
    });
  });

  table(wb, "Causes", [
    { header: "Defect id", key: "defectId" },
    { header: "Slab", key: "slabId", width: 16 },
    { header: "Cause tag", key: "tag", width: 24 },
    { header: "Cause", key: "tagName", width: 28 },
    { header: "Confidence", key: "confidence" },
    { header: "Note", key: "note", width: 36 },
    { header: "Tagged by", key: "by", width: 24 },
    { header: "Tagged (UTC)", key: "at", numFmt: DT, width: 18 },
    { header: "Removed (UTC)", key: "removedAt", numFmt: DT, width: 18 },
    { header: "Removed by", key: "removedBy", width: 24 },
  ], hist.causes.map((c) => ({ ...c, at: date(c.at), removedAt: date(c.removedAt) })), title);

  table(wb, "Investigations", [
    { header: "Reference", key: "ref", width: 14 },
    { header: "Title", key: "title", width: 40 },
    { header: "Status", key: "status" },
    { header: "Opened (UTC)", key: "openedAt", numFmt: DT, width: 18 },
    { header: "Closed (UTC)", key: "closedAt", numFmt: DT, width: 18 },
    { header: "Confirmed cause", key: "confirmedCause", width: 26 },
    { header: "Owner", key: "owner", width: 24 },
    { header: "On this heat", key: "sameHeat" },
  ], hist.investigations.map((i) => ({ ...i, openedAt: date(i.openedAt), closedAt: date(i.closedAt), sameHeat: i.sameHeat ? "yes" : "no (same sequence)" })), title);

  table(wb, "Claims", [
    { header: "Claim", key: "claimNo", width: 14 },
    { header: "Customer", key: "customer", width: 28 },
    { header: "Received", key: "receivedOn", width: 12 },
    { header: "Defect complained of", key: "defectComplained", width: 36 },
    { header: "Quantity (t)", key: "quantityT", numFmt: D1 },
    { header: "Status", key: "status" },
    { header: "On this heat", key: "sameHeat" },
    { header: "Slabs of this heat", key: "slabs", width: 30 },
  ], hist.claims.map((c) => ({ ...c, sameHeat: c.sameHeat ? "yes" : "no (same sequence)", slabs: c.slabs.join(", ") })), title);

  table(wb, "Audit trail", [
    { header: "When (UTC)", key: "at", numFmt: DT, width: 18 },
    { header: "Who", key: "by", width: 24 },
    { header: "Action", key: "action", width: 28 },
    { header: "Record", key: "entity", width: 16 },
    { header: "Record id", key: "entityId", width: 12 },
    { header: "Before", key: "before", width: 50 },
    { header: "After", key: "after", width: 50 },
  ], hist.audit.map((a) => ({ ...a, at: date(a.at) })), title);

  // Text that a spreadsheet could take for a formula stays text (OWASP, CSV injection).
  wb.eachSheet((ws) => void guardSheet(ws));
  return Buffer.from(await wb.xlsx.writeBuffer());
}
