/**
 * Per-slab casting conditions. For every slab, each variable is resolved in this order:
 *   1. the value given for the slab itself (import or feed),
 *   2. the aggregate of the process samples cast while the slab's length passed the mold,
 *   3. the heat's value.
 * The slab is placed on its strand's sample series by its position along the cast length when known
 * (samples whose cast length lies in [start, start + length), within the heat's time window), else by
 * time: the heat's cast start plus the cast time of the pieces before it at the heat's speed.
 * The values derived from the resolved conditions (throughput, shell, brake numbers) are computed here
 * too, and everything is stored in slab_conditions for the reports.
 */
import type Database from "better-sqlite3";
import type { PlantSettings } from "@shared/api/heats";
import type { ConditionSource } from "@shared/variables";
import type { Db } from "../db/client";
import type { EmbrCalibration } from "../db/schema";
import { metallurgicalLengthM, moldDwellMin, senPortVelocityMPerS, shellThicknessMm, throughputTPerMin } from "../metallurgy/casting";
import { embrFieldT, hartmannNumber, stuartNumber } from "../metallurgy/embr";
import { slabFactsChanged } from "./report-cache";
import { getPlantSettings } from "./settings.service";

/** How far outside the heat's own casting window a slab's samples may lie (transition slabs start early). */
const WINDOW_MARGIN_MS = 60 * 60_000;
/** A heat without a cast end is assumed to take at most this long. */
const OPEN_HEAT_MS = 4 * 60 * 60_000;
/** A standard deviation from fewer samples than this is not trusted. */
const MIN_SAMPLES_FOR_SD = 3;

export interface SampleAggregate {
  n: number;
  speedMean: number | null;
  speedMin: number | null;
  speedMax: number | null;
  tundishMean: number | null;
  embrMean: number | null;
  senMean: number | null;
  argonMean: number | null;
  levelN: number;
  levelSd: number | null;
  firstSampleAt: number | null;
}

export interface StrandSettings {
  moldEffectiveLengthMm: number;
  senPortAreaMm2: number;
  senPortCount: number;
  embrCalibration: EmbrCalibration;
}

export interface ConditionInput {
  slab: {
    widthMm: number;
    thicknessMm: number;
    castingSpeedMPerMin: number | null;
    superheatC: number | null;
    embrCurrentA: number | null;
    senDepthMm: number | null;
    argonNlPerMin: number | null;
    moldLevelSdMm: number | null;
  };
  heat: {
    castingSpeedMPerMin: number | null;
    superheatC: number | null;
    liquidusC: number | null;
    embrCurrentA: number | null;
    senDepthMm: number | null;
    argonNlPerMin: number | null;
    moldLevelSdMm: number | null;
  };
  samples: SampleAggregate | null;
  strand: StrandSettings;
  settings: PlantSettings;
}

export interface ResolvedRow {
  castingSpeedMPerMin: number | null;
  castingSpeedSource: ConditionSource | null;
  speedMinMPerMin: number | null;
  speedMaxMPerMin: number | null;
  speedChangeMPerMin: number | null;
  superheatC: number | null;
  superheatSource: ConditionSource | null;
  embrCurrentA: number | null;
  embrCurrentSource: ConditionSource | null;
  senDepthMm: number | null;
  senDepthSource: ConditionSource | null;
  argonNlPerMin: number | null;
  argonSource: ConditionSource | null;
  moldLevelSdMm: number | null;
  moldLevelSdSource: ConditionSource | null;
  sampleCount: number;
  throughputTPerMin: number | null;
  moldDwellMin: number | null;
  shellExitMm: number | null;
  metallurgicalLengthM: number | null;
  embrFieldT: number | null;
  senPortVelocityMPerS: number | null;
  stuartNumber: number | null;
  hartmannNumber: number | null;
}

function pick(slab: number | null, samples: number | null | undefined, heat: number | null): [number | null, ConditionSource | null] {
  if (slab != null) return [slab, "slab"];
  if (samples != null) return [samples, "samples"];
  if (heat != null) return [heat, "heat"];
  return [null, null];
}

/** Derived values at given conditions; shared by slabs and the heat page's heat-level view. */
export function deriveValues(
  v: number | null,
  embrA: number | null,
  widthMm: number | null,
  thicknessMm: number,
  strand: StrandSettings,
  settings: PlantSettings,
) {
  const field = embrA == null ? null : embrFieldT(embrA, strand.embrCalibration);
  if (v == null || v <= 0 || widthMm == null) {
    return {
      throughputTPerMin: null,
      moldDwellMin: null,
      shellExitMm: null,
      metallurgicalLengthM: null,
      embrFieldT: field,
      senPortVelocityMPerS: null,
      stuartNumber: null,
      hartmannNumber: field == null ? null : hartmannNumber(field, thicknessMm / 2000, settings.steelProperties),
    };
  }
  const dwell = moldDwellMin(strand.moldEffectiveLengthMm, v);
  const u = senPortVelocityMPerS(
    v,
    widthMm,
    thicknessMm,
    strand.senPortAreaMm2,
    strand.senPortCount,
    settings.density.solidTPerM3,
    settings.density.liquidTPerM3,
  );
  const halfThicknessM = thicknessMm / 2000;
  return {
    throughputTPerMin: throughputTPerMin(v, widthMm, thicknessMm, settings.density.solidTPerM3),
    moldDwellMin: dwell,
    shellExitMm: shellThicknessMm(settings.shellK.moldMmPerSqrtMin, dwell),
    metallurgicalLengthM: metallurgicalLengthM(v, thicknessMm, settings.shellK.strandMmPerSqrtMin),
    embrFieldT: field,
    senPortVelocityMPerS: u,
    stuartNumber: field == null || u <= 0 ? null : stuartNumber(field, halfThicknessM, u, settings.steelProperties),
    hartmannNumber: field == null ? null : hartmannNumber(field, halfThicknessM, settings.steelProperties),
  };
}

/**
 * When a slab's head left the mold, estimated from its heat: the heat's cast start plus the time
 * the pieces before it took at the casting speed. Samples placed by cast length replace it.
 */
export function estimateCastAt(heatCastStart: number, speedMPerMin: number | null, metresBefore: number): number | null {
  if (!speedMPerMin || speedMPerMin <= 0) return null;
  return Math.round(heatCastStart + (metresBefore / speedMPerMin) * 60_000);
}

/** Pure: the resolution rule and the derived values for one slab. */
export function resolveConditions(input: ConditionInput): ResolvedRow {
  const { slab, heat, samples: s, strand, settings } = input;
  const [speed, speedSrc] = pick(slab.castingSpeedMPerMin, s?.speedMean, heat.castingSpeedMPerMin);
  const sampleSuperheat = s?.tundishMean != null && heat.liquidusC != null ? s.tundishMean - heat.liquidusC : null;
  const [superheat, superheatSrc] = pick(slab.superheatC, sampleSuperheat, heat.superheatC);
  const [embr, embrSrc] = pick(slab.embrCurrentA, s?.embrMean, heat.embrCurrentA);
  const [sen, senSrc] = pick(slab.senDepthMm, s?.senMean, heat.senDepthMm);
  const [argon, argonSrc] = pick(slab.argonNlPerMin, s?.argonMean, heat.argonNlPerMin);
  const sampleLevelSd = s && s.levelN >= MIN_SAMPLES_FOR_SD ? s.levelSd : null;
  const [levelSd, levelSrc] = pick(slab.moldLevelSdMm, sampleLevelSd, heat.moldLevelSdMm);
  const speedMin = s?.speedMin ?? null;
  const speedMax = s?.speedMax ?? null;
  return {
    castingSpeedMPerMin: speed,
    castingSpeedSource: speedSrc,
    speedMinMPerMin: speedMin,
    speedMaxMPerMin: speedMax,
    speedChangeMPerMin: speedMin != null && speedMax != null ? speedMax - speedMin : null,
    superheatC: superheat,
    superheatSource: superheatSrc,
    embrCurrentA: embr,
    embrCurrentSource: embrSrc,
    senDepthMm: sen,
    senDepthSource: senSrc,
    argonNlPerMin: argon,
    argonSource: argonSrc,
    moldLevelSdMm: levelSd,
    moldLevelSdSource: levelSrc,
    sampleCount: s?.n ?? 0,
    ...deriveValues(speed, embr, slab.widthMm, slab.thicknessMm, strand, settings),
  };
}

export interface SlabRow {
  id: number;
  heatId: number;
  strandId: number;
  pieceNo: number;
  lengthMm: number;
  widthMm: number;
  thicknessMm: number;
  castLengthStartM: number | null;
  castAt: number | null;
  castingSpeedMPerMin: number | null;
  superheatC: number | null;
  embrCurrentA: number | null;
  senDepthMm: number | null;
  argonNlPerMin: number | null;
  moldLevelSdMm: number | null;
  heatCastStart: number;
  heatCastEnd: number | null;
  heatSpeed: number | null;
  heatSuperheat: number | null;
  heatLiquidus: number | null;
  heatEmbr: number | null;
  heatSen: number | null;
  heatArgon: number | null;
  heatLevelSd: number | null;
  /** Copied to slab_conditions for the reports. */
  casterId: number;
  gradeId: number;
  familyId: number;
  transition: number;
  sequencePosition: number | null;
  weightT: number;
  chem: Record<(typeof CHEM_COLUMNS)[number], number | null>;
}

/** The heat's chemistry columns the reports use as variables. */
export const CHEM_COLUMNS = ["c_pct", "mn_pct", "si_pct", "s_pct", "p_pct", "al_pct", "nb_pct", "ti_pct", "v_pct", "n_ppm"] as const;
export const emptyChem = () => Object.fromEntries(CHEM_COLUMNS.map((c) => [c, null])) as SlabRow["chem"];

const CHEM = CHEM_COLUMNS.map((c) => `h.${c} as chem_${c}`).join(", ");
const SLAB_SELECT = `select s.id, s.heat_id as heatId, s.strand_id as strandId, s.piece_no as pieceNo, s.length_mm as lengthMm,
    s.width_mm as widthMm, s.thickness_mm as thicknessMm, s.cast_length_start_m as castLengthStartM, s.cast_at as castAt,
    s.casting_speed_m_min as castingSpeedMPerMin, s.superheat_c as superheatC, s.embr_current_a as embrCurrentA,
    s.sen_depth_mm as senDepthMm, s.argon_nl_min as argonNlPerMin, s.mold_level_sd_mm as moldLevelSdMm,
    h.cast_start as heatCastStart, h.cast_end as heatCastEnd, h.casting_speed_m_min as heatSpeed, h.superheat_c as heatSuperheat,
    h.liquidus_c as heatLiquidus, h.embr_current_a as heatEmbr, h.sen_depth_mm as heatSen, h.argon_nl_min as heatArgon,
    h.mold_level_sd_mm as heatLevelSd, h.caster_id as casterId, h.grade_id as gradeId, g.family_id as familyId,
    s.transition as transition, h.sequence_position as sequencePosition, s.weight_t as weightT,
    ${CHEM}
  from slabs s join heats h on h.id = s.heat_id join grades g on g.id = h.grade_id`;

const AGG_COLUMNS = `count(*) as n, avg(casting_speed_m_min) as speedMean, min(casting_speed_m_min) as speedMin,
    max(casting_speed_m_min) as speedMax, avg(tundish_temp_c) as tundishMean, avg(embr_current_a) as embrMean,
    avg(sen_depth_mm) as senMean, avg(argon_nl_min) as argonMean, count(mold_level_mm) as levelN,
    avg(mold_level_mm) as levelMean, avg(mold_level_mm * mold_level_mm) as levelMeanSq, min(sampled_at) as firstSampleAt`;

type AggRow = Omit<SampleAggregate, "levelSd"> & { levelMean: number | null; levelMeanSq: number | null };

function toAggregate(r: AggRow): SampleAggregate | null {
  if (!r || r.n === 0) return null;
  let levelSd: number | null = null;
  if (r.levelN >= 2 && r.levelMean != null && r.levelMeanSq != null) {
    // Sample standard deviation from the running sums (n − 1 in the denominator).
    const variance = ((r.levelMeanSq - r.levelMean * r.levelMean) * r.levelN) / (r.levelN - 1);
    levelSd = Math.sqrt(Math.max(0, variance));
  }
  return {
    n: r.n,
    speedMean: r.speedMean,
    speedMin: r.speedMin,
    speedMax: r.speedMax,
    tundishMean: r.tundishMean,
    embrMean: r.embrMean,
    senMean: r.senMean,
    argonMean: r.argonMean,
    levelN: r.levelN,
    levelSd,
    firstSampleAt: r.firstSampleAt,
  };
}

export interface Resolver {
  /** Recomputes the given slabs (by row id). Returns how many were written. */
  resolve(slabIds: Iterable<number>): number;
  /** The same for slabs whose rows the caller already holds (a fresh import). */
  resolveRows(rows: SlabRow[]): number;
  resolveAll(): number;
}

const UPSERT_COLUMNS = [
  "slab_id",
  "heat_id",
  "caster_id",
  "strand_id",
  "grade_id",
  "family_id",
  "cast_at",
  "transition",
  "sequence_position",
  "weight_t",
  "width_mm",
  "thickness_mm",
  ...CHEM_COLUMNS,
  "casting_speed_m_min",
  "casting_speed_source",
  "speed_min_m_min",
  "speed_max_m_min",
  "speed_change_m_min",
  "superheat_c",
  "superheat_source",
  "embr_current_a",
  "embr_current_source",
  "sen_depth_mm",
  "sen_depth_source",
  "argon_nl_min",
  "argon_source",
  "mold_level_sd_mm",
  "mold_level_sd_source",
  "sample_count",
  "throughput_t_min",
  "mold_dwell_min",
  "shell_exit_mm",
  "metallurgical_length_m",
  "embr_field_t",
  "sen_port_velocity_m_s",
  "stuart_number",
  "hartmann_number",
  "computed_at",
] as const;

const CHUNK = 500;

/**
 * Prepares the statements once, so an import can resolve a hundred thousand slabs in one go.
 * Call inside the caller's transaction.
 */
export function createResolver(db: Db): Resolver {
  const sqlite: Database.Database = db.$client;
  const settings = getPlantSettings(db);
  const strands = new Map<number, StrandSettings>(
    (
      sqlite.prepare("select id, mold_effective_length_mm as l, sen_port_area_mm2 as a, sen_port_count as c, embr_calibration as cal from strands").all() as {
        id: number;
        l: number;
        a: number;
        c: number;
        cal: string;
      }[]
    ).map((r) => [r.id, { moldEffectiveLengthMm: r.l, senPortAreaMm2: r.a, senPortCount: r.c, embrCalibration: JSON.parse(r.cal) as EmbrCalibration }]),
  );
  // The time span each strand has samples for: slabs outside it need no sample query at all.
  const sampleSpan = new Map<number, [number, number]>(
    (
      sqlite.prepare("select strand_id as s, min(sampled_at) as lo, max(sampled_at) as hi from process_samples group by strand_id").all() as {
        s: number;
        lo: number;
        hi: number;
      }[]
    ).map((r) => [r.s, [r.lo, r.hi]]),
  );
  const byLength = sqlite.prepare(
    `select ${AGG_COLUMNS} from process_samples where strand_id = ? and sampled_at >= ? and sampled_at <= ?
       and cast_length_m >= ? and cast_length_m < ?`,
  );
  const byTime = sqlite.prepare(`select ${AGG_COLUMNS} from process_samples where strand_id = ? and sampled_at >= ? and sampled_at < ?`);
  const setCastAt = sqlite.prepare("update slabs set cast_at = ? where id = ?");
  const upsert = sqlite.prepare(
    `insert into slab_conditions (${UPSERT_COLUMNS.join(", ")}) values (${UPSERT_COLUMNS.map(() => "?").join(", ")})
     on conflict(slab_id) do update set ${UPSERT_COLUMNS.slice(1)
       .map((c) => `${c} = excluded.${c}`)
       .join(", ")}`,
  );
  const selectChunk = sqlite.prepare(`${SLAB_SELECT} where s.id in (${Array(CHUNK).fill("?").join(",")})`);
  const piecesChunk = sqlite.prepare(
    `select heat_id as h, strand_id as s, piece_no as p, length_mm as l from slabs where heat_id in (${Array(CHUNK).fill("?").join(",")})`,
  );

  /** Length of strand cast before each piece of the given heats, by heat:strand:piece (m). */
  const offsetsFor = (heatIds: number[]) => {
    const pieces = new Map<string, { p: number; l: number }[]>();
    for (let i = 0; i < heatIds.length; i += CHUNK) {
      const chunk = heatIds.slice(i, i + CHUNK);
      const stmt =
        chunk.length === CHUNK
          ? piecesChunk
          : sqlite.prepare(
              `select heat_id as h, strand_id as s, piece_no as p, length_mm as l from slabs where heat_id in (${chunk.map(() => "?").join(",")})`,
            );
      for (const r of stmt.all(...chunk) as { h: number; s: number; p: number; l: number }[]) {
        const k = `${r.h}:${r.s}`;
        let list = pieces.get(k);
        if (!list) pieces.set(k, (list = []));
        list.push({ p: r.p, l: r.l });
      }
    }
    const before = new Map<string, number>();
    for (const [k, list] of pieces) {
      list.sort((a, b) => a.p - b.p);
      let sum = 0;
      for (const x of list) {
        before.set(`${k}:${x.p}`, sum / 1000);
        sum += x.l;
      }
    }
    return before;
  };

  const one = (r: SlabRow, beforeM: number, now: number) => {
    const strand = strands.get(r.strandId)!;
    const span = sampleSpan.get(r.strandId);
    const speed = r.castingSpeedMPerMin ?? r.heatSpeed;
    const t0 = r.castAt ?? estimateCastAt(r.heatCastStart, speed, beforeM);
    let agg: SampleAggregate | null = null;
    if (span) {
      if (r.castLengthStartM != null) {
        const lo = r.heatCastStart - WINDOW_MARGIN_MS;
        const hi = (r.heatCastEnd ?? r.heatCastStart + OPEN_HEAT_MS) + WINDOW_MARGIN_MS;
        if (hi >= span[0] && lo <= span[1]) {
          agg = toAggregate(byLength.get(r.strandId, lo, hi, r.castLengthStartM, r.castLengthStartM + r.lengthMm / 1000) as AggRow);
        }
      } else if (t0 != null && speed) {
        const t1 = t0 + (r.lengthMm / 1000 / speed) * 60_000;
        if (t1 >= span[0] && t0 <= span[1]) agg = toAggregate(byTime.get(r.strandId, t0, t1) as AggRow);
      }
    }
    // Placed by cast length, the first sample is when the head passed the mold; by time, the estimate stands.
    const placedAt = r.castLengthStartM != null && agg?.firstSampleAt != null ? agg.firstSampleAt : t0;
    if (placedAt != null && placedAt !== r.castAt) setCastAt.run(Math.round(placedAt), r.id);
    const x = resolveConditions({
      slab: r,
      heat: {
        castingSpeedMPerMin: r.heatSpeed,
        superheatC: r.heatSuperheat,
        liquidusC: r.heatLiquidus,
        embrCurrentA: r.heatEmbr,
        senDepthMm: r.heatSen,
        argonNlPerMin: r.heatArgon,
        moldLevelSdMm: r.heatLevelSd,
      },
      samples: agg,
      strand,
      settings,
    });
    upsert.run(
      r.id,
      r.heatId,
      r.casterId,
      r.strandId,
      r.gradeId,
      r.familyId,
      placedAt == null ? null : Math.round(placedAt),
      r.transition ? 1 : 0,
      r.sequencePosition,
      r.weightT,
      r.widthMm,
      r.thicknessMm,
      ...CHEM_COLUMNS.map((c) => r.chem[c]),
      x.castingSpeedMPerMin,
      x.castingSpeedSource,
      x.speedMinMPerMin,
      x.speedMaxMPerMin,
      x.speedChangeMPerMin,
      x.superheatC,
      x.superheatSource,
      x.embrCurrentA,
      x.embrCurrentSource,
      x.senDepthMm,
      x.senDepthSource,
      x.argonNlPerMin,
      x.argonSource,
      x.moldLevelSdMm,
      x.moldLevelSdSource,
      x.sampleCount,
      x.throughputTPerMin,
      x.moldDwellMin,
      x.shellExitMm,
      x.metallurgicalLengthM,
      x.embrFieldT,
      x.senPortVelocityMPerS,
      x.stuartNumber,
      x.hartmannNumber,
      now,
    );
  };

  /** Rows read with SLAB_SELECT carry the chemistry as chem_… columns: fold them into `chem`. */
  const fromSql = (rows: Record<string, unknown>[]): SlabRow[] =>
    rows.map((r) => {
      const chem = emptyChem();
      for (const c of CHEM_COLUMNS) chem[c] = r[`chem_${c}`] as number | null;
      return { ...(r as unknown as SlabRow), chem };
    });

  const run = (rows: SlabRow[], now: number) => {
    // The pieces before a slab matter only to place a slab that has no cast time yet.
    const unplaced = rows.filter((r) => r.castAt == null);
    const offsets = unplaced.length ? offsetsFor([...new Set(unplaced.map((r) => r.heatId))]) : new Map<string, number>();
    for (const r of rows) one(r, offsets.get(`${r.heatId}:${r.strandId}:${r.pieceNo}`) ?? 0, now);
    slabFactsChanged(
      db,
      rows.map((r) => r.id),
    );
  };

  return {
    resolve(ids) {
      const list = [...new Set(ids)];
      const now = Date.now();
      let n = 0;
      // A chunk at a time, so a large import does not hold every slab row in memory at once.
      for (let i = 0; i < list.length; i += CHUNK) {
        const chunk = list.slice(i, i + CHUNK);
        const stmt = chunk.length === CHUNK ? selectChunk : sqlite.prepare(`${SLAB_SELECT} where s.id in (${chunk.map(() => "?").join(",")})`);
        const rows = fromSql(stmt.all(...chunk) as Record<string, unknown>[]);
        run(rows, now);
        n += rows.length;
      }
      return n;
    },
    resolveRows(rows) {
      run(rows, Date.now());
      return rows.length;
    },
    resolveAll() {
      // Paged by id: better-sqlite3 cannot write while a read is still being iterated.
      const page = sqlite.prepare(`${SLAB_SELECT} where s.id > ? order by s.id limit 5000`);
      const now = Date.now();
      let n = 0;
      let last = 0;
      for (;;) {
        const rows = fromSql(page.all(last) as Record<string, unknown>[]);
        if (rows.length === 0) break;
        run(rows, now);
        n += rows.length;
        last = rows[rows.length - 1]!.id;
      }
      slabFactsChanged(db);
      return n;
    },
  };
}
