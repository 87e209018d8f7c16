/**
 * Planning an import: every row checked against the database (references, duplicates, bounds that
 * need several cells) and compared with what is stored, without writing anything. The plan's
 * `apply()` then writes it; the caller runs plan and apply inside one transaction, so an import is
 * all or nothing and a dry run is the plan alone. Heats and slabs are planned a batch of rows at a
 * time (BatchPlanner), so that a large workbook's pages can be written while later ones are read.
 *
 * Columns absent from the file leave stored values alone; a column present with an empty cell
 * clears the stored value. Ids are stored upper-case (scanners and people type both).
 */
import type Database from "better-sqlite3";
import type { PlantSettings } from "@shared/api/heats";
import { liquidusC } from "../metallurgy/liquidus";
import { slabWeightT } from "../metallurgy/casting";
import { CHEM_COLUMNS, emptyChem, estimateCastAt, type SlabRow } from "../services/conditions.service";
import { figure, said, type Said } from "../lib/http-error";
import type { ErrorList, ParsedRow, ParsedRows, Value } from "./coerce";

export interface PlanCounts {
  created: number;
  updated: number;
  unchanged: number;
}

export interface AppliedChanges {
  /** Slab row ids whose resolved conditions must be recomputed (none left when `resolved` says so). */
  slabIds: number[];
  /** Slabs already resolved through the sink given to apply(), as they were written. */
  resolved?: number;
  /**
   * Slabs resolved through the sink whose cast time a later batch moved (a piece below them came
   * after they were written): to be resolved once more, not counted again.
   */
  again?: number[];
}

/**
 * Takes written slabs with what the resolver needs, a few thousand at a time, while apply() goes on:
 * a hundred thousand slabs' rows are never all held at once.
 */
export type ResolveSink = (rows: SlabRow[]) => void;
/** Slabs handed to the sink at once. */
const SINK_ROWS = 500;

interface HeatForSlab {
  id: number;
  heat_no: string;
  caster_id: number;
  cast_start: number;
  cast_end: number | null;
  casting_speed_m_min: number | null;
  superheat_c: number | null;
  liquidus_c: number | null;
  embr_current_a: number | null;
  sen_depth_mm: number | null;
  argon_nl_min: number | null;
  mold_level_sd_mm: number | null;
  grade_id: number;
  family_id: number;
  sequence_position: number | null;
  [chem: string]: number | string | null;
}

export interface Plan {
  counts: PlanCounts;
  apply(sink?: ResolveSink): AppliedChanges;
}

/** A batch of rows checked by a BatchPlanner, for the same planner to write. */
export interface CheckedBatch {
  readonly rows: ParsedRows;
}

/**
 * A plan made a batch of rows at a time, in file order (heats and slabs: a large workbook's rows
 * come a page at a time from its reader thread). `check` reads the database and records the batch's
 * problems, `write` writes a checked batch, `finish` closes the import (sequence order, late cast
 * times). A batch may be written as soon as it is checked, or after every batch is checked: the
 * database and the errors end the same either way (the import service writes ahead only while no
 * problem has been found, inside a transaction it rolls back otherwise).
 */
export interface BatchPlanner<B extends CheckedBatch = CheckedBatch> {
  /** Created, updated and unchanged rows of the batches checked so far. */
  readonly counts: PlanCounts;
  check(rows: ParsedRows): B;
  write(batch: B, sink?: ResolveSink): void;
  finish(sink?: ResolveSink): AppliedChanges;
}

/** Batches checked now, every one before any is written, and written in order by apply(). */
export function planBatches<B extends CheckedBatch>(planner: BatchPlanner<B>, batches: readonly ParsedRows[]): Plan {
  const checked = batches.map((rows) => planner.check(rows));
  return {
    counts: planner.counts,
    apply(sink) {
      for (const batch of checked) planner.write(batch, sink);
      return planner.finish(sink);
    },
  };
}

/** The whole file as one batch. */
const planWhole = <B extends CheckedBatch>(planner: BatchPlanner<B>, rows: ParsedRows): Plan => planBatches(planner, [rows]);

type Rec = Record<string, string | number | null>;
type Op = { kind: "create" | "update"; rec: Rec; id?: number };

const CHUNK = 500;

/** Per connection, the statements of full chunks (a page of rows asks the same few hundred times). */
const chunkStatements = new WeakMap<Database.Database, Map<string, Database.Statement>>();
const FULL_CHUNK = Array<string>(CHUNK).fill("?").join(",");

function selectIn<T>(sqlite: Database.Database, sql: (placeholders: string) => string, keys: unknown[]): T[] {
  const out: T[] = [];
  for (let i = 0; i < keys.length; i += CHUNK) {
    const chunk = keys.slice(i, i + CHUNK);
    let stmt: Database.Statement;
    if (chunk.length === CHUNK) {
      const text = sql(FULL_CHUNK);
      let cache = chunkStatements.get(sqlite);
      if (!cache) chunkStatements.set(sqlite, (cache = new Map()));
      stmt = cache.get(text) ?? sqlite.prepare(text);
      cache.set(text, stmt);
    } else stmt = sqlite.prepare(sql(chunk.map(() => "?").join(",")));
    out.push(...(stmt.all(...chunk) as T[]));
  }
  return out;
}

function sameRecord(rec: Rec, existing: Record<string, unknown>): boolean {
  for (const [k, v] of Object.entries(rec)) {
    const e = existing[k] ?? null;
    if (e !== v) return false;
  }
  return true;
}

/** The file's value when the column is present (null clears), else the stored one. */
function take(values: ParsedRow["values"], key: string, existing: Record<string, unknown> | undefined, column = key): string | number | null {
  if (values.has(key)) {
    const v = values.get(key)!;
    return typeof v === "boolean" ? (v ? 1 : 0) : v;
  }
  return (existing?.[column] as string | number | null | undefined) ?? null;
}

const upper = (v: Value) => (v == null ? null : String(v).trim().toUpperCase());

function codeMap(sqlite: Database.Database, table: "casters" | "grades") {
  return new Map((sqlite.prepare(`select id, code from ${table}`).all() as { id: number; code: string }[]).map((r) => [r.code.toUpperCase(), r]));
}

function tally(ops: (Op | "unchanged")[]): PlanCounts {
  const c = { created: 0, updated: 0, unchanged: 0 };
  for (const o of ops) {
    if (o === "unchanged") c.unchanged++;
    else if (o.kind === "create") c.created++;
    else c.updated++;
  }
  return c;
}

/**
 * Insert and update statements prepared once per import from the first record's columns, bound by
 * position (named binding of an object per row costs more than the write itself at 100,000 rows).
 */
function writer(sqlite: Database.Database, table: string, withUpdatedAt = true) {
  let ins: { stmt: Database.Statement; cols: string[] } | null = null;
  let upd: { stmt: Database.Statement; cols: string[] } | null = null;
  return {
    insert(rec: Rec): number {
      if (!ins) {
        const cols = Object.keys(rec);
        ins = { cols, stmt: sqlite.prepare(`insert into ${table} (${cols.join(", ")}) values (${cols.map(() => "?").join(", ")})`) };
      }
      return Number(ins.stmt.run(...ins.cols.map((c) => rec[c] ?? null)).lastInsertRowid);
    },
    update(id: number, rec: Rec, now: number) {
      if (!upd) {
        const cols = Object.keys(rec);
        upd = {
          cols,
          stmt: sqlite.prepare(`update ${table} set ${cols.map((c) => `${c} = ?`).join(", ")}${withUpdatedAt ? ", updated_at = ?" : ""} where id = ?`),
        };
      }
      const values = upd.cols.map((c) => rec[c] ?? null);
      if (withUpdatedAt) values.push(now);
      upd.stmt.run(...values, id);
    },
  };
}

// ---------------------------------------------------------------------------------------------
// Heats
// ---------------------------------------------------------------------------------------------

const HEAT_VALUE_COLUMNS = [
  "ladle_weight_t",
  "casting_speed_m_min",
  "tundish_temp_c",
  "embr_current_a",
  "sen_depth_mm",
  "argon_nl_min",
  "mold_level_sd_mm",
  "c_pct",
  "si_pct",
  "mn_pct",
  "p_pct",
  "s_pct",
  "al_pct",
  "cu_pct",
  "ni_pct",
  "cr_pct",
  "mo_pct",
  "ti_pct",
  "nb_pct",
  "v_pct",
  "n_ppm",
] as const;
const PCT = ["c", "si", "mn", "p", "s", "al", "cu", "ni", "cr", "mo", "ti", "nb", "v"] as const;

export function planHeats(sqlite: Database.Database, rows: ParsedRows, errors: ErrorList, settings: PlantSettings): Plan {
  return planWhole(heatsPlanner(sqlite, errors, settings), rows);
}

interface HeatBatch extends CheckedBatch {
  ops: (Op | "unchanged")[];
}

/** The heats plan a batch of rows at a time (planHeats: all rows as one batch). */
export function heatsPlanner(sqlite: Database.Database, errors: ErrorList, settings: PlantSettings): BatchPlanner<HeatBatch> {
  const casters = codeMap(sqlite, "casters");
  const grades = codeMap(sqlite, "grades");
  const sequences = new Map(
    (sqlite.prepare("select id, sequence_no, caster_id from sequences").all() as { id: number; sequence_no: string; caster_id: number }[]).map((s) => [
      s.sequence_no,
      s,
    ]),
  );
  const firstRow = new Map<string, number>();
  const newSequences = new Map<string, number>(); // sequence_no → caster id
  // The new sequences in the order they were met, and how many of them are written.
  const newSequenceOrder: string[] = [];
  let sequencesWritten = 0;
  const counts: PlanCounts = { created: 0, updated: 0, unchanged: 0 };
  let now = 0;
  let w: ReturnType<typeof writer> | null = null;
  let insSeq: Database.Statement | null = null;
  const touchedHeats: number[] = [];
  const touchedSequences = new Set<number>();

  return {
    counts,
    check(rows) {
      const keys = [...new Set(rows.map((r) => upper(r.values.get("heat_no") ?? null)).filter((k): k is string => !!k))];
      const existing = new Map(
        selectIn<Record<string, any>>(
          sqlite,
          (p) => `select h.*, q.sequence_no from heats h left join sequences q on q.id = h.sequence_id where h.heat_no in (${p})`,
          keys,
        ).map((h) => [h.heat_no as string, h]),
      );
      const ops: (Op | "unchanged")[] = [];

      for (const row of rows) {
        const v = row.values;
        const heatNo = upper(v.get("heat_no") ?? null);
        if (!heatNo) continue;
        if (firstRow.has(heatNo)) {
          errors.add(row.rowNo, "heat_no", said("imports.rows.heatTwice", { heat: heatNo, first: firstRow.get(heatNo)! }));
          continue;
        }
        firstRow.set(heatNo, row.rowNo);
        const old = existing.get(heatNo);
        // A row with bad cells is still checked against the plant, so the file can be fixed in one go.
        let ok = !row.bad;
        const fail = (column: string | null, message: Said) => {
          errors.add(row.rowNo, column, message);
          ok = false;
        };

        const casterCode = upper(v.get("caster") ?? null);
        const caster = casterCode ? casters.get(casterCode) : undefined;
        if (casterCode && !caster) fail("caster", said("imports.rows.casterNotSetUpAdd", { code: casterCode }));
        const gradeCode = upper(v.get("grade") ?? null);
        const grade = gradeCode ? grades.get(gradeCode) : undefined;
        if (gradeCode && !grade) fail("grade", said("imports.rows.gradeNotSetUp", { code: gradeCode }));

        const rec: Rec = {
          heat_no: heatNo,
          caster_id: caster?.id ?? null,
          grade_id: grade?.id ?? null,
          cast_start: take(v, "cast_start", old),
          cast_end: take(v, "cast_end", old),
        };
        for (const c of HEAT_VALUE_COLUMNS) rec[c] = take(v, c, old);
        if (rec.cast_end != null && rec.cast_start != null && (rec.cast_end as number) < (rec.cast_start as number)) {
          fail("cast_end", said("imports.rows.castEndBeforeStart"));
        }
        const pctSum = PCT.reduce((s, el) => s + ((rec[`${el}_pct`] as number | null) ?? 0), 0) + ((rec.n_ppm as number | null) ?? 0) / 10_000;
        if (pctSum > 100) fail(null, said("imports.rows.chemistryOver", { sum: figure(pctSum, { digits: 2, group: false }) }));

        // Liquidus: given, else from the chemistry with the plant's coefficients (needs carbon at least).
        if (v.has("liquidus_c") && v.get("liquidus_c") != null) {
          rec.liquidus_c = v.get("liquidus_c") as number;
          rec.liquidus_source = "given";
        } else if (!v.has("liquidus_c") && old?.liquidus_source === "given") {
          rec.liquidus_c = old.liquidus_c;
          rec.liquidus_source = "given";
        } else if (rec.c_pct != null) {
          const chem = Object.fromEntries(PCT.map((el) => [el, rec[`${el}_pct`] as number | null]));
          rec.liquidus_c = liquidusC(chem, settings.liquidus);
          rec.liquidus_source = "computed";
        } else {
          rec.liquidus_c = null;
          rec.liquidus_source = null;
        }
        // Superheat: given, else tundish temperature − liquidus.
        if (v.has("superheat_c") && v.get("superheat_c") != null) {
          rec.superheat_c = v.get("superheat_c") as number;
          rec.superheat_source = "given";
        } else if (!v.has("superheat_c") && old?.superheat_source === "given") {
          rec.superheat_c = old.superheat_c;
          rec.superheat_source = "given";
        } else if (rec.tundish_temp_c != null && rec.liquidus_c != null) {
          rec.superheat_c = (rec.tundish_temp_c as number) - (rec.liquidus_c as number);
          rec.superheat_source = "computed";
          if ((rec.superheat_c as number) < -10 || (rec.superheat_c as number) > 150) {
            fail(
              "tundish_temp_c",
              said("imports.rows.superheatOutside", {
                superheat: Math.round(rec.superheat_c as number),
                tundish: figure(rec.tundish_temp_c as number, { group: false }),
                liquidus: figure(rec.liquidus_c as number, { digits: 1, group: false }),
              }),
            );
          }
        } else {
          rec.superheat_c = null;
          rec.superheat_source = null;
        }

        // Sequence: found, or to be created on the heat's caster. (One created by an earlier batch is
        // found here with the caster it was created on, which is what newSequences says of it too.)
        const seqNo = v.has("sequence_no") ? upper(v.get("sequence_no") ?? null) : ((old?.sequence_no as string | undefined) ?? null);
        if (seqNo) {
          const seq = sequences.get(seqNo);
          const casterOfSeq = seq?.caster_id ?? newSequences.get(seqNo);
          if (casterOfSeq !== undefined && caster && casterOfSeq !== caster.id) {
            fail("sequence_no", said("imports.rows.sequenceOtherCaster", { sequence: seqNo }));
          } else if (!seq && caster) {
            if (!newSequences.has(seqNo)) newSequenceOrder.push(seqNo);
            newSequences.set(seqNo, caster.id);
          }
        }
        rec.sequence_no = seqNo;
        if (!ok) continue;
        const compare = { ...old, sequence_no: old?.sequence_no ?? null };
        ops.push(old ? (sameRecord(rec, compare) ? "unchanged" : { kind: "update", rec, id: old.id }) : { kind: "create", rec });
      }
      const c = tally(ops);
      counts.created += c.created;
      counts.updated += c.updated;
      counts.unchanged += c.unchanged;
      return { rows, ops };
    },
    write({ ops }) {
      if (!w) {
        now = Date.now();
        w = writer(sqlite, "heats");
        insSeq = sqlite.prepare("insert into sequences (sequence_no, caster_id) values (?, ?)");
      }
      // Every new sequence met so far, in that order, before the heats that name it.
      for (; sequencesWritten < newSequenceOrder.length; sequencesWritten++) {
        const no = newSequenceOrder[sequencesWritten]!;
        const casterId = newSequences.get(no)!;
        sequences.set(no, { id: Number(insSeq!.run(no, casterId).lastInsertRowid), sequence_no: no, caster_id: casterId });
      }
      for (const op of ops) {
        if (op === "unchanged") continue;
        const { sequence_no, ...fields } = op.rec;
        const seqId = sequence_no ? sequences.get(sequence_no as string)!.id : null;
        const rec = { ...fields, sequence_id: seqId };
        if (seqId) touchedSequences.add(seqId);
        if (op.kind === "create") touchedHeats.push(w.insert(rec));
        else {
          w.update(op.id!, rec, now);
          touchedHeats.push(op.id!);
        }
      }
    },
    finish() {
      // Positions in each touched sequence follow the cast start times; the range of the sequence too.
      const order = sqlite.prepare("select id from heats where sequence_id = ? order by cast_start, id");
      const setPos = sqlite.prepare("update heats set sequence_position = ? where id = ?");
      const setRange = sqlite.prepare(
        "update sequences set started_at = (select min(cast_start) from heats where sequence_id = @id), ended_at = (select max(coalesce(cast_end, cast_start)) from heats where sequence_id = @id), updated_at = @now where id = @id",
      );
      for (const seqId of touchedSequences) {
        (order.pluck().all(seqId) as number[]).forEach((id, i) => setPos.run(i + 1, id));
        setRange.run({ id: seqId, now });
      }
      // Positions may have moved for every heat of a touched sequence: their slabs follow too.
      const seqHeats = selectIn<{ id: number }>(sqlite, (p) => `select id from heats where sequence_id in (${p})`, [...touchedSequences]).map((r) => r.id);
      const heatIds = [...new Set([...touchedHeats, ...seqHeats])];
      const slabIds = selectIn<{ id: number }>(sqlite, (p) => `select id from slabs where heat_id in (${p})`, heatIds).map((r) => r.id);
      return { slabIds };
    },
  };
}

// ---------------------------------------------------------------------------------------------
// Slabs
// ---------------------------------------------------------------------------------------------

const SLAB_VALUE_COLUMNS = [
  "length_mm",
  "width_mm",
  "thickness_mm",
  "cast_length_start_m",
  "casting_speed_m_min",
  "superheat_c",
  "embr_current_a",
  "sen_depth_mm",
  "argon_nl_min",
  "mold_level_sd_mm",
] as const;

/**
 * One heat/strand/piece as a Map key: a number while the parts fit (a text key per slab costs an
 * extra string each, 100,000 of them in a large file), else the text.
 */
const pieceKey = (heatId: number, strandId: number, pieceNo: number): number | string =>
  heatId < 2 ** 26 && strandId < 2 ** 16 && Number.isInteger(pieceNo) && pieceNo >= 0 && pieceNo < 2 ** 10
    ? (heatId * 2 ** 16 + strandId) * 2 ** 10 + pieceNo
    : `${heatId}:${strandId}:${pieceNo}`;

export function planSlabs(sqlite: Database.Database, rows: ParsedRows, errors: ErrorList, settings: PlantSettings): Plan {
  return planWhole(slabsPlanner(sqlite, errors, settings), rows);
}

interface SlabBatch extends CheckedBatch {
  /** The rows to write, in file order: a new slab's record is built again from its row when written (nothing of the stored slab goes into it), so only an update keeps its record until then. */
  writes: number[];
  updates: Map<number, { rec: Rec; id: number }>;
  /** Per row its slab and heat as stored (upper case); per new slab its strand. */
  slabOf: (string | null)[];
  heatOf: (string | null)[];
  strandOf: Int32Array;
}

/**
 * The slabs plan a batch of rows at a time (planSlabs: all rows as one batch). What a row is checked
 * against is read from the database before any batch that could change it is written: each batch's
 * heats and stored slabs are read when the batch is checked, before it is written, and the pieces
 * stored on a heat (who holds which piece, and their lengths) when the heat is first named, by a
 * row's heat or by the stored slab a row updates. A slab a row names again is refused as a repeat
 * before anything read about it matters, so no check sees what this import wrote.
 */
export function slabsPlanner(sqlite: Database.Database, errors: ErrorList, settings: PlantSettings): BatchPlanner<SlabBatch> {
  /** By heat number; null: not on record. */
  const heats = new Map<string, HeatForSlab | null>();
  const heatById = new Map<number, HeatForSlab>();
  const strands = new Map(
    (sqlite.prepare("select id, caster_id, strand_no from strands").all() as { id: number; caster_id: number; strand_no: number }[]).map((s) => [
      `${s.caster_id}:${s.strand_no}`,
      s.id,
    ]),
  );
  // Which slab already holds each heat/strand/piece (for the heats this file touches), as stored before the import.
  const pieceOwner = new Map<number | string, string>();
  const piecesRead = new Set<number>();
  // Each written slab's cast time is estimated from its heat and the pieces before it (stored
  // pieces and this file's together); samples placed by cast length refine it when resolved.
  // By heat, then strand: piece → length.
  const pieces = new Map<number, Map<number, Map<number, number>>>();
  const addPiece = (heatId: number, strandId: number, piece: number, length: number) => {
    let byStrand = pieces.get(heatId);
    if (!byStrand) pieces.set(heatId, (byStrand = new Map()));
    let m = byStrand.get(strandId);
    if (!m) byStrand.set(strandId, (m = new Map()));
    m.set(piece, length);
  };
  /** Metres of strand cast before each piece of a heat/strand: the lengths of the pieces below it, summed in piece order. */
  const metresBefore = (heatId: number, strandId: number) => {
    const m = pieces.get(heatId)?.get(strandId);
    const before = new Map<number, number>();
    if (!m) return before;
    let sum = 0;
    for (const piece of [...m.keys()].sort((a, b) => a - b)) {
      before.set(piece, sum / 1000);
      sum += m.get(piece)!;
    }
    return before;
  };
  const readPieces = (heatIds: number[]) => {
    const ids = heatIds.filter((id) => !piecesRead.has(id));
    for (const id of ids) piecesRead.add(id);
    const stored = selectIn<{ slab_id: string; heat_id: number; strand_id: number; piece_no: number; length_mm: number }>(
      sqlite,
      (p) => `select slab_id, heat_id, strand_id, piece_no, length_mm from slabs where heat_id in (${p})`,
      ids,
    );
    for (const s of stored) {
      pieceOwner.set(pieceKey(s.heat_id, s.strand_id, s.piece_no), s.slab_id);
      addPiece(s.heat_id, s.strand_id, s.piece_no, s.length_mm);
    }
  };
  const firstRow = new Map<string, number>();
  const firstPiece = new Map<number | string, number>();
  const counts: PlanCounts = { created: 0, updated: 0, unchanged: 0 };

  /** The row's record: the file's values where it has the column, else the stored slab's. */
  const record = (v: ParsedRow["values"], slabId: string, heat: HeatForSlab, strandId: number, pieceNo: number, old: Record<string, any> | undefined): Rec => {
    const rec: Rec = { slab_id: slabId, heat_id: heat.id, strand_id: strandId, piece_no: pieceNo };
    for (const c of SLAB_VALUE_COLUMNS) rec[c] = take(v, c, old);
    rec.transition = take(v, "transition", old) ?? 0;
    if (v.has("weight_t") && v.get("weight_t") != null) {
      rec.weight_t = v.get("weight_t") as number;
      rec.weight_source = "given";
    } else if (!v.has("weight_t") && old?.weight_source === "given") {
      rec.weight_t = old.weight_t;
      rec.weight_source = "given";
    } else {
      const w = slabWeightT(rec.length_mm as number, rec.width_mm as number, rec.thickness_mm as number, settings.density.solidTPerM3);
      rec.weight_t = Math.round(w * 1000) / 1000;
      rec.weight_source = "computed";
    }
    return rec;
  };

  // Written so far.
  let now = 0;
  let w: ReturnType<typeof writer> | null = null;
  /** Slabs with a higher id than this were inserted by this import. */
  let lastIdBefore = 0;
  const updatedIds = new Set<number>();
  const slabIds: number[] = [];
  let resolved = 0;
  /** Per heat/strand written, its highest piece written, and the heat/strands a later batch put a piece below one already written. */
  const highestWritten = new Map<number | string, number>();
  const moved = new Map<number | string, [heatId: number, strandId: number]>();
  // The heat's chemistry, one object per heat shared by its slabs (the resolver only reads it).
  const chems = new Map<number, SlabRow["chem"]>();
  const chemOf = (heat: HeatForSlab) => {
    let chem = chems.get(heat.id);
    if (!chem) chems.set(heat.id, (chem = Object.assign(emptyChem(), Object.fromEntries(CHEM_COLUMNS.map((c) => [c, heat[c] as number | null])))));
    return chem;
  };

  return {
    counts,
    check(rows) {
      // Each row's slab and heat as stored (upper case), worked out once for the batch.
      const n = rows.length;
      const slabOf = new Array<string | null>(n);
      const heatOf = new Array<string | null>(n);
      for (let i = 0; i < n; i++) {
        slabOf[i] = upper(rows.get(i, "slab_id") ?? null);
        heatOf[i] = upper(rows.get(i, "heat_no") ?? null);
      }
      const heatNos = [...new Set(heatOf.filter((k): k is string => !!k && !heats.has(k)))];
      const found = selectIn<HeatForSlab>(
        sqlite,
        (p) => `select h.id, h.heat_no, h.caster_id, h.cast_start, h.cast_end, h.casting_speed_m_min, h.superheat_c, h.liquidus_c,
          h.embr_current_a, h.sen_depth_mm, h.argon_nl_min, h.mold_level_sd_mm, h.grade_id, g.family_id, h.sequence_position,
          ${CHEM_COLUMNS.map((c) => `h.${c}`).join(", ")}
          from heats h join grades g on g.id = h.grade_id where h.heat_no in (${p})`,
        heatNos,
      );
      for (const h of found) {
        heats.set(h.heat_no, h);
        heatById.set(h.id, h);
      }
      for (const k of heatNos) if (!heats.has(k)) heats.set(k, null);
      const slabKeys = [...new Set(slabOf.filter((k): k is string => !!k))];
      const existing = new Map(
        selectIn<Record<string, any>>(sqlite, (p) => `select * from slabs where slab_id in (${p})`, slabKeys).map((s) => [s.slab_id as string, s]),
      );
      readPieces([...found.map((h) => h.id), ...[...existing.values()].map((s) => s.heat_id as number)]);

      const writes: number[] = [];
      const updates = new Map<number, { rec: Rec; id: number }>();
      // A new slab's strand (its heat and piece are its row's), for write().
      const strandOf = new Int32Array(n);
      for (let i = 0; i < n; i++) {
        const rowNo = rows.rowNo(i);
        const slabId = slabOf[i];
        if (!slabId) continue;
        if (firstRow.has(slabId)) {
          errors.add(rowNo, "slab_id", said("imports.rows.slabTwice", { slab: slabId, first: firstRow.get(slabId)! }));
          continue;
        }
        firstRow.set(slabId, rowNo);
        const old = existing.get(slabId);
        const heatNo = heatOf[i];
        const heat = heatNo ? (heats.get(heatNo) ?? undefined) : undefined;
        if (heatNo && !heat) errors.add(rowNo, "heat_no", said("imports.rows.heatNotOnRecord", { heat: heatNo }));
        const strandNo = rows.get(i, "strand") as number | null;
        const strandId = heat && strandNo != null ? strands.get(`${heat.caster_id}:${strandNo}`) : undefined;
        if (heat && strandNo != null && !strandId)
          errors.add(rowNo, "strand", said("imports.rows.strandNotOnHeatCaster", { strand: strandNo, heat: String(heatNo) }));
        const pieceNo = rows.get(i, "piece_no") as number | null;
        if (rows.bad(i) || !heat || !strandId || pieceNo == null) continue;
        const piece = pieceKey(heat.id, strandId, pieceNo);
        if (firstPiece.has(piece)) {
          errors.add(
            rowNo,
            "piece_no",
            said("imports.rows.pieceTwice", { piece: pieceNo, heat: String(heatNo), strand: strandNo!, first: firstPiece.get(piece)! }),
          );
          continue;
        }
        firstPiece.set(piece, rowNo);
        const holder = pieceOwner.get(piece);
        if (holder && holder !== slabId) {
          errors.add(rowNo, "piece_no", said("imports.rows.pieceTaken", { piece: pieceNo, heat: String(heatNo), strand: strandNo!, slab: holder }));
          continue;
        }
        if (!old) {
          counts.created++;
          writes.push(i);
          strandOf[i] = strandId;
          continue;
        }
        const rec = record(rows.row(i).values, slabId, heat, strandId, pieceNo, old);
        if (sameRecord(rec, old)) counts.unchanged++;
        else {
          counts.updated++;
          writes.push(i);
          updates.set(i, { rec, id: old.id });
        }
      }
      return { rows, writes, updates, slabOf, heatOf, strandOf };
    },

    write({ rows, writes, updates, slabOf, heatOf, strandOf }, sink) {
      if (!w) {
        now = Date.now();
        w = writer(sqlite, "slabs");
        lastIdBefore = sqlite.prepare("select coalesce(max(id), 0) from slabs").pluck().get() as number;
      }
      /** The record to write for row i (a new slab's built again from its row). */
      const recordOf = (i: number): { rec: Rec; id?: number } =>
        updates.get(i) ?? {
          rec: record(rows.row(i).values, slabOf[i]!, heats.get(heatOf[i]!)!, strandOf[i]!, rows.get(i, "piece_no") as number, undefined),
        };
      // This batch's pieces join the stored ones and the earlier batches'; then the metres before
      // each piece of the heat/strands it writes to.
      const touched = new Map<number | string, [heatId: number, strandId: number, highest: number]>();
      for (const i of writes) {
        let heatId: number, strandId: number, piece: number;
        const update = updates.get(i);
        if (update) {
          heatId = update.rec.heat_id as number;
          strandId = update.rec.strand_id as number;
          piece = update.rec.piece_no as number;
          addPiece(heatId, strandId, piece, update.rec.length_mm as number);
        } else {
          heatId = heats.get(heatOf[i]!)!.id;
          strandId = strandOf[i]!;
          piece = rows.get(i, "piece_no") as number;
          addPiece(heatId, strandId, piece, take(rows.row(i).values, "length_mm", undefined) as number);
        }
        const key = pieceKey(heatId, strandId, 0);
        // A piece below one an earlier batch wrote moves that slab's cast time: it is written again at the end (finish).
        const highest = highestWritten.get(key);
        if (highest !== undefined && piece <= highest) moved.set(key, [heatId, strandId]);
        const t = touched.get(key);
        if (t) t[2] = Math.max(t[2], piece);
        else touched.set(key, [heatId, strandId, piece]);
      }
      const before = new Map<number | string, Map<number, number>>();
      for (const [key, [heatId, strandId]] of touched) before.set(key, metresBefore(heatId, strandId));

      let slabRows: SlabRow[] = [];
      const flush = () => {
        if (!sink || slabRows.length === 0) return;
        sink(slabRows);
        resolved += slabRows.length;
        slabRows = [];
      };
      for (const i of writes) {
        const { rec, id: oldId } = recordOf(i);
        const heat = heatById.get(rec.heat_id as number)!;
        const speed = (rec.casting_speed_m_min as number | null) ?? heat.casting_speed_m_min;
        rec.cast_at = estimateCastAt(heat.cast_start, speed, before.get(pieceKey(heat.id, rec.strand_id as number, 0))?.get(rec.piece_no as number) ?? 0);
        let id: number;
        if (oldId === undefined) id = w.insert(rec);
        else {
          w.update(oldId, rec, now);
          id = oldId;
          updatedIds.add(id);
        }
        // Everything the resolver needs is in hand: no need to read the slab back.
        if (!sink) {
          slabIds.push(id);
          continue;
        }
        slabRows.push({
          id,
          heatId: heat.id,
          strandId: rec.strand_id as number,
          pieceNo: rec.piece_no as number,
          lengthMm: rec.length_mm as number,
          widthMm: rec.width_mm as number,
          thicknessMm: rec.thickness_mm as number,
          castLengthStartM: rec.cast_length_start_m as number | null,
          castAt: rec.cast_at as number | null,
          castingSpeedMPerMin: rec.casting_speed_m_min as number | null,
          superheatC: rec.superheat_c as number | null,
          embrCurrentA: rec.embr_current_a as number | null,
          senDepthMm: rec.sen_depth_mm as number | null,
          argonNlPerMin: rec.argon_nl_min as number | null,
          moldLevelSdMm: rec.mold_level_sd_mm as number | null,
          heatCastStart: heat.cast_start,
          heatCastEnd: heat.cast_end,
          heatSpeed: heat.casting_speed_m_min,
          heatSuperheat: heat.superheat_c,
          heatLiquidus: heat.liquidus_c,
          heatEmbr: heat.embr_current_a,
          heatSen: heat.sen_depth_mm,
          heatArgon: heat.argon_nl_min,
          heatLevelSd: heat.mold_level_sd_mm,
          casterId: heat.caster_id,
          gradeId: heat.grade_id,
          familyId: heat.family_id,
          transition: rec.transition as number,
          sequencePosition: heat.sequence_position,
          weightT: rec.weight_t as number,
          chem: chemOf(heat),
        });
        if (slabRows.length >= SINK_ROWS) flush();
      }
      flush();
      for (const [key, [, , highest]] of touched) highestWritten.set(key, Math.max(highestWritten.get(key) ?? highest, highest));
    },

    finish(sink) {
      // A heat/strand whose pieces came over several batches out of order: its slabs written before
      // the lower piece came get the cast time the whole file gives them, and are resolved again.
      const again: number[] = [];
      const ofStrand = sqlite.prepare("select id, piece_no as pieceNo, casting_speed_m_min as speed from slabs where heat_id = ? and strand_id = ?");
      const setCastAt = sqlite.prepare("update slabs set cast_at = ? where id = ?");
      for (const [heatId, strandId] of moved.values()) {
        const heat = heatById.get(heatId)!;
        const before = metresBefore(heatId, strandId);
        for (const s of ofStrand.all(heatId, strandId) as { id: number; pieceNo: number; speed: number | null }[]) {
          if (s.id <= lastIdBefore && !updatedIds.has(s.id)) continue;
          setCastAt.run(estimateCastAt(heat.cast_start, s.speed ?? heat.casting_speed_m_min, before.get(s.pieceNo) ?? 0), s.id);
          again.push(s.id);
        }
      }
      // Without a sink the caller resolves by id, reading each slab back.
      return sink ? { slabIds: [], resolved, again } : { slabIds: [...slabIds, ...again] };
    },
  };
}

// ---------------------------------------------------------------------------------------------
// Process samples
// ---------------------------------------------------------------------------------------------

const SAMPLE_VALUE_COLUMNS: [string, string][] = [
  ["cast_length_m", "cast_length_m"],
  ["casting_speed_m_min", "casting_speed_m_min"],
  ["tundish_temp_c", "tundish_temp_c"],
  ["embr_current_a", "embr_current_a"],
  ["sen_depth_mm", "sen_depth_mm"],
  ["argon_nl_min", "argon_nl_min"],
  ["mold_level_mm", "mold_level_mm"],
];

/** How far around the changed samples slabs are looked for (the resolver's own window margin). */
const SAMPLE_WINDOW_MARGIN_MS = 60 * 60_000;

export function planSamples(sqlite: Database.Database, rows: ParsedRows, errors: ErrorList): Plan {
  const casters = codeMap(sqlite, "casters");
  const strands = new Map(
    (sqlite.prepare("select id, caster_id, strand_no from strands").all() as { id: number; caster_id: number; strand_no: number }[]).map((s) => [
      `${s.caster_id}:${s.strand_no}`,
      s.id,
    ]),
  );
  const firstRow = new Map<string, number>();
  const candidates: { row: ParsedRow; strandId: number; time: number }[] = [];
  const range = new Map<number, [number, number]>();
  for (const row of rows) {
    const v = row.values;
    const casterCode = upper(v.get("caster") ?? null);
    const caster = casterCode ? casters.get(casterCode) : undefined;
    if (casterCode && !caster) errors.add(row.rowNo, "caster", said("imports.rows.casterNotSetUp", { code: casterCode }));
    const strandNo = v.get("strand") as number | null;
    const strandId = caster && strandNo != null ? strands.get(`${caster.id}:${strandNo}`) : undefined;
    if (caster && strandNo != null && !strandId)
      errors.add(row.rowNo, "strand", said("imports.rows.strandNotOnCaster", { strand: strandNo, caster: caster.code }));
    const time = v.get("time") as number | null;
    if (row.bad || !strandId || time == null) continue;
    const key = `${strandId}:${time}`;
    if (firstRow.has(key)) {
      errors.add(row.rowNo, "time", said("imports.rows.sampleTwice", { first: firstRow.get(key)! }));
      continue;
    }
    firstRow.set(key, row.rowNo);
    candidates.push({ row, strandId, time });
    const r = range.get(strandId);
    range.set(strandId, r ? [Math.min(r[0], time), Math.max(r[1], time)] : [time, time]);
  }
  const existing = new Map<string, Record<string, any>>();
  const load = sqlite.prepare("select * from process_samples where strand_id = ? and sampled_at between ? and ?");
  for (const [strandId, [lo, hi]] of range) {
    for (const s of load.all(strandId, lo, hi) as Record<string, any>[]) existing.set(`${strandId}:${s.sampled_at}`, s);
  }
  const ops: (Op | "unchanged")[] = [];
  for (const c of candidates) {
    const old = existing.get(`${c.strandId}:${c.time}`);
    const rec: Rec = { strand_id: c.strandId, sampled_at: c.time };
    for (const [key, col] of SAMPLE_VALUE_COLUMNS) rec[col] = take(c.row.values, key, old, col);
    ops.push(old ? (sameRecord(rec, old) ? "unchanged" : { kind: "update", rec, id: old.id }) : { kind: "create", rec });
  }
  return {
    counts: tally(ops),
    apply() {
      const changed = new Map<number, [number, number]>();
      const w = writer(sqlite, "process_samples", false);
      for (const op of ops) {
        if (op === "unchanged") continue;
        if (op.kind === "create") w.insert(op.rec);
        else w.update(op.id!, op.rec, 0);
        const strandId = op.rec.strand_id as number;
        const t = op.rec.sampled_at as number;
        const r = changed.get(strandId);
        changed.set(strandId, r ? [Math.min(r[0], t), Math.max(r[1], t)] : [t, t]);
      }
      // Slabs of heats cast on these strands around the changed samples.
      const find = sqlite
        .prepare(
          `select s.id from slabs s join heats h on h.id = s.heat_id
           where s.strand_id = @strand and h.cast_start <= @hi and coalesce(h.cast_end, h.cast_start + 14400000) >= @lo`,
        )
        .pluck();
      const slabIds: number[] = [];
      for (const [strand, [lo, hi]] of changed) {
        slabIds.push(...(find.all({ strand, lo: lo - SAMPLE_WINDOW_MARGIN_MS, hi: hi + SAMPLE_WINDOW_MARGIN_MS }) as number[]));
      }
      return { slabIds };
    },
  };
}

// ---------------------------------------------------------------------------------------------
// Coil and plate → slab (the rolling mill's trace)
// ---------------------------------------------------------------------------------------------

export function planProducts(sqlite: Database.Database, rows: ParsedRows, errors: ErrorList): Plan {
  const firstRow = new Map<string, number>();
  const candidates: { row: ParsedRow; productId: string }[] = [];
  for (const row of rows) {
    const id = upper(row.values.get("product_id") ?? null);
    const kind = row.values.has("kind")
      ? String(row.values.get("kind") ?? "")
          .trim()
          .toLowerCase()
      : null;
    if (kind !== null && kind !== "coil" && kind !== "plate") errors.add(row.rowNo, "kind", said("imports.rows.productKind", { kind }));
    if (row.bad || !id) continue;
    if (firstRow.has(id)) {
      errors.add(row.rowNo, "product_id", said("imports.rows.productTwice", { product: id, first: firstRow.get(id)! }));
      continue;
    }
    firstRow.set(id, row.rowNo);
    candidates.push({ row, productId: id });
  }
  const slabIds = [...new Set(candidates.map((c) => upper(c.row.values.get("slab_id") ?? null)).filter((s): s is string => !!s))];
  const slabs = new Map(
    selectIn<{ id: number; slab_id: string }>(sqlite, (p) => `select id, slab_id from slabs where slab_id in (${p})`, slabIds).map((s) => [s.slab_id, s.id]),
  );
  const existing = new Map(
    selectIn<Record<string, any>>(
      sqlite,
      (p) => `select * from products where product_id in (${p})`,
      candidates.map((c) => c.productId),
    ).map((p) => [p.product_id as string, p]),
  );
  const ops: (Op | "unchanged")[] = [];
  for (const c of candidates) {
    const slabCode = upper(c.row.values.get("slab_id") ?? null)!;
    const slabId = slabs.get(slabCode);
    if (slabId === undefined) {
      errors.add(c.row.rowNo, "slab_id", said("imports.rows.slabNotOnRecord", { slab: slabCode }));
      continue;
    }
    const old = existing.get(c.productId);
    const rec: Rec = {
      product_id: c.productId,
      kind: c.row.values.has("kind") ? String(c.row.values.get("kind")).trim().toLowerCase() : ((old?.kind as string | undefined) ?? "coil"),
      slab_id: slabId,
      rolled_at: take(c.row.values, "rolled_at", old),
      weight_t: take(c.row.values, "weight_t", old),
    };
    ops.push(old ? (sameRecord(rec, old) ? "unchanged" : { kind: "update", rec, id: old.id }) : { kind: "create", rec });
  }
  return {
    counts: tally(ops),
    apply() {
      const w = writer(sqlite, "products");
      const now = Date.now();
      for (const op of ops) {
        if (op === "unchanged") continue;
        if (op.kind === "create") w.insert({ ...op.rec, created_at: now, updated_at: now });
        else w.update(op.id!, op.rec, now);
      }
      return { slabIds: [] };
    },
  };
}
