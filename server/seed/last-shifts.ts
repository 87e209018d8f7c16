/**
 * The demo plant's last shifts: the caster kept casting up to the moment the demo was seeded, so a
 * fresh demo has slabs lying in the yard — cast in the last hours, most of them not inspected yet.
 *
 * The eight months of history (demo-plant.ts) keep their fixed dates, so every report and test that
 * reads them stays as it was. These shifts are planned apart, from their own seed, with times counted
 * from the start of the first sequence; only when they are written are they moved so that the last
 * slab leaves the mold just before `now`. Their content is therefore the same on every machine; only
 * the clock differs.
 *
 * What the yard finds in them:
 * - the first two heats were hot-charged: their slabs were rolled into coils a few hours after
 *   casting (the tablet asks before a slab-yard finding on them);
 * - slabs cast more than five hours ago were looked at by the previous shift's inspector, who logged
 *   a slab-yard defect on some of them (not reviewed yet);
 * - the rest lie in the yard, uninspected.
 */
import type Database from "better-sqlite3";
import { liquidusC } from "../metallurgy/liquidus";
import { createRandom } from "./random";
import { GRADES, type DefectCode } from "./catalogue";
import { DEMO_END } from "./demo-plant";
import type { Disposition, Face } from "@shared/domain";

const SAMPLE_SECONDS = 20;
const DENSITY_T_M3 = 7.8;
const THICKNESS_MM = 230;
const MINUTE = 60_000;
const HOUR = 3_600_000;
/** Heats per sequence: two sequences, about sixteen hours of casting. */
const SEQUENCE_HEATS = [16, 17];
const TURNAROUND_MS = 70 * MINUTE;
/** The previous shift inspected what was cast before this many hours before the seed. */
const INSPECTED_BEFORE_H = 5;
const HOT_CHARGED_HEATS = 2;
const YARD_TYPES: [DefectCode, number][] = [
  ["SLG", 3],
  ["LFC", 2],
  ["DEP", 2],
  ["TCC", 1.5],
  ["LCC", 1],
  ["PIN", 1.5],
  ["OSM", 1],
  ["SCB", 1],
];
const FACES: Partial<Record<DefectCode, Face[]>> = { LCC: ["left", "right"], TCC: ["left", "right", "inner"] };

export interface LastShiftsIds {
  casterId: number;
  strandIds: Record<number, number>;
  gradeIds: Record<string, number>;
  defectTypeIds: Record<string, number>;
  inspector: string;
}

export interface LastShiftsCounts {
  sequences: number;
  heats: number;
  slabs: number;
  processSamples: number;
  defects: number;
  products: number;
  /** When the last slab of the last shift was cast (ms). */
  endsAt: number;
}

interface Sample {
  strandNo: number;
  t: number;
  len: number;
  v: number;
  temp: number;
  embr: number;
  sen: number;
  argon: number;
  level: number;
}

interface PlannedHeat {
  seq: number;
  position: number;
  gradeCode: string;
  chem: Record<string, number>;
  nPpm: number;
  liquidus: number;
  tundishChange: boolean;
  ladleT: number;
  embr: number;
  sen: number;
  argon: number;
  start: number;
  end: number;
  speedMean: number;
  tempMean: number;
  levelSd: number;
  startLen: number[];
  endLen: number[];
}

interface PlannedSlab {
  heat: number;
  strandNo: number;
  piece: number;
  lengthMm: number;
  widthMm: number;
  weightT: number;
  startM: number;
  castAt: number;
  transition: boolean;
}

const round = (x: number, d = 0) => Math.round(x * 10 ** d) / 10 ** d;
const clamp = (x: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, x));
const mean = (xs: number[]) => xs.reduce((s, x) => s + x, 0) / xs.length;
const sd = (xs: number[]) => {
  if (xs.length < 2) return 0;
  const m = mean(xs);
  return Math.sqrt(xs.reduce((s, x) => s + (x - m) ** 2, 0) / (xs.length - 1));
};

/**
 * Plans the shifts with times from 0: heats, the level-2 samples of each strand, and the slabs cut
 * from them (the same rules as the history: a slab belongs to the heat that gave most of its length,
 * a slab cut across a ladle change is a transition slab).
 */
function plan(strandNos: number[]) {
  const r = createRandom(20261201);
  const heats: PlannedHeat[] = [];
  const samples: Sample[] = [];
  const slabs: PlannedSlab[] = [];
  const sequences: { start: number; end: number }[] = [];
  let t = 0;
  SEQUENCE_HEATS.forEach((nHeats, seq) => {
    const seqStart = t;
    let grade = r.weighted(GRADES.map((g) => [g, g.weight] as const));
    const widthMm = r.pick([1400, 1500, 1600, 1750]);
    const brakeA = r.pick([200, 300, 400]);
    const senBase = round(r.uniform(130, 190) / 5) * 5;
    const argonBase = r.uniform(6, 10);
    const strandMassPerM = DENSITY_T_M3 * (widthMm / 1000) * (THICKNESS_MM / 1000);
    const cumLen = strandNos.map(() => 0);
    const seqHeats: PlannedHeat[] = [];
    const seqSamples: Sample[][] = strandNos.map(() => []);
    for (let h = 0; h < nHeats; h++) {
      if (h > 0 && r.chance(0.12)) grade = r.weighted(GRADES.map((g) => [g, g.weight] as const));
      const chem: Record<string, number> = {};
      for (const [el, aim] of Object.entries(grade.chem)) chem[el] = Math.max(0, round(aim * (1 + r.normal(0, 0.05)), 4));
      chem.cu = round(Math.abs(r.normal(0.02, 0.008)), 3);
      chem.ni = round(Math.abs(r.normal(0.015, 0.005)), 3);
      const liquidus = round(liquidusC(chem), 1);
      const tundishChange = h === Math.floor(nHeats / 2);
      const superheat = clamp(h === 0 ? r.normal(32, 4) : r.normal(24, 4), 10, 45);
      const tundishStart = liquidus + superheat + 3;
      const v0 = clamp(1.6 - 0.00035 * (widthMm - 1400) + r.normal(0, 0.05), 1.0, 1.8);
      const levelSd = clamp(1.5 + 1.1 * (v0 - 1.3) + Math.abs(r.normal(0, 0.4)), 0.6, 6);
      const embr = Math.max(0, round(brakeA + r.normal(0, 10)));
      const argon = clamp(argonBase + r.normal(0, 0.6), 2, 16);
      const ladleT = round(r.normal(215, 5), 1);
      const heatLen = ladleT / strandMassPerM / strandNos.length;
      const heat: PlannedHeat = {
        seq,
        position: h + 1,
        gradeCode: grade.code,
        chem,
        nPpm: round(grade.nPpm * (1 + r.normal(0, 0.1))),
        liquidus,
        tundishChange,
        ladleT,
        embr,
        sen: senBase,
        argon,
        start: t,
        end: t,
        speedMean: v0,
        tempMean: tundishStart,
        levelSd,
        startLen: [...cumLen],
        endLen: cumLen.map((l) => l + heatLen),
      };
      const speeds: number[] = [];
      const temps: number[] = [];
      const levels: number[] = [];
      strandNos.forEach((strandNo, si) => {
        let tt = heat.start;
        let len = cumLen[si]!;
        let k = 0;
        while (len < heat.endLen[si]!) {
          const minutes = (k * SAMPLE_SECONDS) / 60;
          let v = v0 + r.normal(0, 0.012);
          if (h === 0 && minutes < 6)
            v = v0 * (0.55 + 0.45 * (minutes / 6)); // start-up ramp
          else if (h > 0 && minutes < 3.5) v = v0 * 0.78; // slowed for the ladle change
          v = clamp(v, 0.4, 2.2);
          const temp = tundishStart - 6 * ((len - cumLen[si]!) / heatLen) + r.normal(0, 0.6);
          const level = r.normal(0, levelSd);
          const s: Sample = {
            strandNo,
            t: tt,
            len,
            v,
            temp,
            embr: embr === 0 ? 0 : embr + r.normal(0, 4),
            sen: senBase,
            argon: clamp(argon + r.normal(0, 0.3), 1, 20),
            level,
          };
          seqSamples[si]!.push(s);
          speeds.push(v);
          temps.push(temp);
          levels.push(level);
          len += (v * SAMPLE_SECONDS) / 60;
          tt += SAMPLE_SECONDS * 1000;
          k++;
        }
        cumLen[si] = len;
        heat.endLen[si] = len;
        heat.end = Math.max(heat.end, tt);
      });
      heat.speedMean = mean(speeds);
      heat.tempMean = mean(temps);
      heat.levelSd = sd(levels);
      seqHeats.push(heat);
      t = heat.end + SAMPLE_SECONDS * 1000;
    }
    // The slabs cut from each strand of the sequence.
    strandNos.forEach((strandNo, si) => {
      const ss = seqSamples[si]!;
      const total = cumLen[si]!;
      const pieces = new Map<PlannedHeat, number>();
      let start = 0;
      let cursor = 0;
      while (start < total - 0.5) {
        let length = r.uniform(9.6, 10.8);
        if (total - start - length < 4) length = total - start;
        const end = start + length;
        let owner = seqHeats[0]!;
        let best = -1;
        let crosses = false;
        for (const hp of seqHeats) {
          const overlap = Math.min(end, hp.endLen[si]!) - Math.max(start, hp.startLen[si]!);
          if (overlap > best) [best, owner] = [overlap, hp];
          if (hp.startLen[si]! > start + 0.05 && hp.startLen[si]! < end - 0.05) crosses = true;
        }
        while (cursor < ss.length - 1 && ss[cursor]!.len < start) cursor++;
        const piece = (pieces.get(owner) ?? 0) + 1;
        pieces.set(owner, piece);
        const lengthMm = round(length * 1000, -1);
        slabs.push({
          heat: heats.length + seqHeats.indexOf(owner),
          strandNo,
          piece,
          lengthMm,
          widthMm,
          weightT: round((lengthMm / 1000) * (widthMm / 1000) * (THICKNESS_MM / 1000) * DENSITY_T_M3, 2),
          startM: round(start, 2),
          castAt: ss[cursor]!.t,
          transition: crosses,
        });
        start = end;
      }
      samples.push(...ss);
    });
    heats.push(...seqHeats);
    sequences.push({ start: seqStart, end: t });
    t += TURNAROUND_MS;
  });
  return { r, heats, samples, slabs, sequences, length: sequences[sequences.length - 1]!.end };
}

function dispositionFor(severity: number, pick: <T>(items: readonly (readonly [T, number])[]) => T): Disposition {
  if (severity === 1)
    return pick([
      ["accept", 0.7],
      ["scarf", 0.3],
    ] as const);
  if (severity === 2)
    return pick([
      ["scarf", 0.6],
      ["grind", 0.4],
    ] as const);
  if (severity === 3)
    return pick([
      ["grind", 0.4],
      ["hold", 0.6],
    ] as const);
  return pick([
    ["hold", 0.7],
    ["scrap", 0.3],
  ] as const);
}

/** The next free number after the highest `<prefix>NNNN` already stored in a column (the history's numbering goes on). */
function nextNumber(sqlite: Database.Database, table: string, column: string, prefix: string): number {
  const last = sqlite
    .prepare(`select max(cast(substr(${column}, ?) as integer)) from ${table} where ${column} like ? || '%'`)
    .pluck()
    .get(prefix.length + 1, prefix) as number | null;
  return (last ?? 0) + 1;
}

/**
 * Writes the last shifts so that the last slab was cast just before `now`, never overlapping the
 * history (on a machine whose clock is behind the demo's end, they follow right after it).
 */
export function generateLastShifts(sqlite: Database.Database, ids: LastShiftsIds, now: number): LastShiftsCounts {
  const strandNos = Object.keys(ids.strandIds).map(Number).sort();
  const p = plan(strandNos);
  const end = Math.max(Math.floor(now / MINUTE) * MINUTE - 2 * MINUTE, DEMO_END + 2 * HOUR + p.length);
  const offset = end - p.length;
  const at = (ms: number) => ms + offset;
  const yy = String(new Date(end).getUTCFullYear()).slice(2);
  let heatNo = nextNumber(sqlite, "heats", "heat_no", `L${yy}`);
  let seqNo = nextNumber(sqlite, "sequences", "sequence_no", `S${yy}-`);
  let coilNo = nextNumber(sqlite, "products", "product_id", `K${yy}`);
  const counts: LastShiftsCounts = { sequences: 0, heats: 0, slabs: 0, processSamples: 0, defects: 0, products: 0, endsAt: end };

  const seqIds = p.sequences.map((s) => {
    counts.sequences++;
    return Number(
      sqlite
        .prepare("insert into sequences (sequence_no, caster_id, started_at, ended_at) values (?, ?, ?, ?)")
        .run(`S${yy}-${String(seqNo++).padStart(4, "0")}`, ids.casterId, at(s.start), at(s.end)).lastInsertRowid,
    );
  });
  const insHeat = sqlite.prepare(`insert into heats (heat_no, sequence_id, sequence_position, caster_id, grade_id, cast_start, cast_end,
      ladle_weight_t, tundish_change, casting_speed_m_min, tundish_temp_c, liquidus_c, liquidus_source, superheat_c, superheat_source,
      embr_current_a, sen_depth_mm, argon_nl_min, mold_level_sd_mm, c_pct, si_pct, mn_pct, p_pct, s_pct, al_pct, cu_pct, ni_pct,
      cr_pct, mo_pct, ti_pct, nb_pct, v_pct, n_ppm)
      values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, 'computed', ?, 'computed', ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`);
  const heatRows: { id: number; heatNo: string }[] = p.heats.map((h) => {
    const no = `L${yy}${String(heatNo++).padStart(4, "0")}`;
    const c = h.chem;
    const id = Number(
      insHeat.run(
        no,
        seqIds[h.seq],
        h.position,
        ids.casterId,
        ids.gradeIds[h.gradeCode],
        at(h.start),
        at(h.end),
        h.ladleT,
        h.tundishChange ? 1 : 0,
        round(h.speedMean, 2),
        round(h.tempMean, 0),
        h.liquidus,
        round(h.tempMean - h.liquidus, 1),
        h.embr,
        h.sen,
        round(h.argon, 1),
        round(h.levelSd, 2),
        c.c ?? null,
        c.si ?? null,
        c.mn ?? null,
        c.p ?? null,
        c.s ?? null,
        c.al ?? null,
        c.cu ?? null,
        c.ni ?? null,
        c.cr ?? null,
        c.mo ?? null,
        c.ti ?? null,
        c.nb ?? null,
        c.v ?? null,
        h.nPpm,
      ).lastInsertRowid,
    );
    counts.heats++;
    return { id, heatNo: no };
  });
  const insSample = sqlite.prepare(`insert into process_samples (strand_id, sampled_at, cast_length_m, casting_speed_m_min,
      tundish_temp_c, embr_current_a, sen_depth_mm, argon_nl_min, mold_level_mm) values (?, ?, ?, ?, ?, ?, ?, ?, ?)`);
  for (const s of p.samples) {
    insSample.run(
      ids.strandIds[s.strandNo],
      at(s.t),
      round(s.len, 2),
      round(s.v, 3),
      round(s.temp, 1),
      round(s.embr, 0),
      s.sen,
      round(s.argon, 2),
      round(s.level, 2),
    );
    counts.processSamples++;
  }

  const insSlab = sqlite.prepare(`insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm,
      weight_t, weight_source, cast_length_start_m, cast_at, transition, disposition) values (?, ?, ?, ?, ?, ?, ?, ?, 'computed', ?, ?, ?, ?)`);
  const insProduct = sqlite.prepare("insert into products (product_id, kind, slab_id, rolled_at, weight_t) values (?, 'coil', ?, ?, ?)");
  const insDefect = sqlite.prepare(`insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, length_mm,
      width_mm, depth_mm, severity, stage, disposition, note, review_status, client_key, found_at, created_by, created_at, updated_at)
      values (?, ?, ?, ?, ?, ?, ?, ?, ?, 'slab_yard', ?, null, 'new', ?, ?, ?, ?, ?)`);
  const r = p.r;
  const inspectedBefore = end - INSPECTED_BEFORE_H * HOUR;
  const bySlabOrder = [...p.slabs].sort((a, b) => a.castAt - b.castAt);
  for (const s of bySlabOrder) {
    const heat = heatRows[s.heat]!;
    const castAt = at(s.castAt);
    const hotCharged = p.heats[s.heat]!.seq === 0 && p.heats[s.heat]!.position <= HOT_CHARGED_HEATS;
    // Draw for every slab, so what one slab gets does not depend on the clock.
    const found = r.chance(0.16);
    const severity = r.weighted([
      [1, 0.35],
      [2, 0.4],
      [3, 0.2],
      [4, 0.05],
    ] as const);
    const code = r.weighted(YARD_TYPES);
    const disposition = dispositionFor(severity, r.weighted);
    const face = r.pick(FACES[code] ?? (["inner", "inner", "outer"] as Face[]));
    const along = round(r.uniform(0.05, 0.95) * s.lengthMm, -1);
    const acrossShare = r.uniform(0.1, 0.9);
    const sizeMm = code === "LFC" || code === "LCC" ? round(r.uniform(200, 1400), -1) : round(r.uniform(10, 90));
    const delayH = r.uniform(3.5, 4.8);
    const rolledAfterH = r.uniform(3, 5);
    const logged = !hotCharged && found && castAt < inspectedBefore && castAt + delayH * HOUR < end;
    // One defect at most per slab here: the slab's disposition is that defect's.
    const slabRowId = Number(
      insSlab.run(
        `${heat.heatNo}-${s.strandNo}${String(s.piece).padStart(2, "0")}`,
        heat.id,
        ids.strandIds[s.strandNo],
        s.piece,
        s.lengthMm,
        s.widthMm,
        THICKNESS_MM,
        s.weightT,
        s.startM,
        castAt,
        s.transition ? 1 : 0,
        logged ? disposition : null,
      ).lastInsertRowid,
    );
    counts.slabs++;
    const rolledAt = castAt + Math.round(rolledAfterH * HOUR);
    if (hotCharged && rolledAt < end) {
      insProduct.run(`K${yy}${String(coilNo++).padStart(6, "0")}`, slabRowId, rolledAt, round(s.weightT * 0.985, 2));
      counts.products++;
    }
    if (logged) {
      const foundAt = castAt + Math.round(delayH * HOUR);
      const acrossLimit = face === "left" || face === "right" ? THICKNESS_MM : s.widthMm;
      insDefect.run(
        slabRowId,
        ids.defectTypeIds[code],
        face,
        along,
        round(acrossShare * acrossLimit),
        sizeMm,
        round(r.uniform(4, 40)),
        round(r.uniform(0.5, 4), 1),
        severity,
        disposition,
        `demo-yard-${counts.defects + 1}`,
        foundAt,
        ids.inspector,
        foundAt,
        foundAt,
      );
      counts.defects++;
    }
  }
  return counts;
}
