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
      throughputTPerMin: null, moldDwellMin: null, shellExitMm: null, metallurgicalLengthM: null,
      embrFieldT: field, senPortVelocityMPerS: null, stuartNumber: null,
      hartmannNumber: field == null ? null : hartmannNumber(field, thicknessMm / 2000, settings.steelProperties),
    };
  }
  const dwell = moldDwellMin(strand.moldEffectiveLengthMm, v);
  const u = senPortVelocityMPerS(v, widthMm, thicknessMm, strand.senPortAreaMm2, strand.senPortCount, settings.density.solidTPerM3, settings.density.liquidTPerM3);
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

interface SlabRow {
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
}

const SLAB_SELECT = `select s.id, s.heat_id as heatId, s.strand_id as strandId, s.piece_no as pieceNo, s.length_mm as lengthMm,
    s.width_mm as widthMm, s.thickness_mm as thicknessMm, s.cast_length_start_m as castLengthStartM, s.cast_at as castAt,
    s.casting_speed_m_min as castingSpeedMPerMin, s.superheat_c as superheatC, s.embr_current_a as embrCurrentA,
    s.sen_depth_mm as senDepthMm, s.argon_nl_min as argonNlPerMin, s.mold_level_sd_mm as moldLevelSdMm,
    h.cast_start as heatCastStart, h.cast_end as heatCastEnd, h.casting_speed_m_min as heatSpeed, h.superheat_c as heatSuperheat,
    h.liquidus_c as heatLiquidus, h.embr_current_a as heatEmbr, h.sen_depth_mm as heatSen, h.argon_nl_min as heatArgon,
    h.mold_level_sd_mm as heatLevelSd
  from slabs s join heats h on h.id = s.heat_id`;

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
    n: r.n, speedMean: r.speedMean, speedMin: r.speedMin, speedMax: r.speedMax, tundishMean: r.tundishMean,
    embrMean: r.embrMean, senMean: r.senMean, argonMean: r.argonMean, levelN: r.levelN, levelSd, firstSampleAt: r.firstSampleAt,
  };
}

export interface Resolver {
  /** Recomputes the given slabs (by row id). Returns how many were written. */
  resolve(slabIds: Iterable<number>): number;
  resolveAll(): number;
}

/**
 * Prepares the statements once, so an import can resolve tens of thousands of slabs quickly.
 * Call inside the caller's transaction.
 */
export function createResolver(db: Db): Resolver {
  const sqlite: Database.Database = db.$client;
  const settings = getPlantSettings(db);
  const strands = new Map<number, StrandSettings>(
    (sqlite
      .prepare("select id, mold_effective_length_mm as l, sen_port_area_mm2 as a, sen_port_count as c, embr_calibration as cal from strands")
      .all() as { id: number; l: number; a: number; c: number; cal: string }[]).map((r) => [
      r.id,
      { moldEffectiveLengthMm: r.l, senPortAreaMm2: r.a, senPortCount: r.c, embrCalibration: JSON.parse(r.cal) as EmbrCalibration },
    ]),
  );
  const byLength = sqlite.prepare(
    `select ${AGG_COLUMNS} from process_samples where strand_id = ? and sampled_at >= ? and sampled_at <= ?
       and cast_length_m >= ? and cast_length_m < ?`,
  );
  const byTime = sqlite.prepare(`select ${AGG_COLUMNS} from process_samples where strand_id = ? and sampled_at >= ? and sampled_at < ?`);
  const piecesBefore = sqlite.prepare(
    "select coalesce(sum(length_mm), 0) from slabs where heat_id = ? and strand_id = ? and piece_no < ?",
  ).pluck();
  const setCastAt = sqlite.prepare("update slabs set cast_at = ? where id = ?");
  const upsert = sqlite.prepare(`insert into slab_conditions (slab_id, casting_speed_m_min, casting_speed_source, speed_min_m_min,
      speed_max_m_min, speed_change_m_min, superheat_c, superheat_source, embr_current_a, embr_current_source, sen_depth_mm,
      sen_depth_source, argon_nl_min, argon_source, mold_level_sd_mm, mold_level_sd_source, sample_count, throughput_t_min,
      mold_dwell_min, shell_exit_mm, metallurgical_length_m, embr_field_t, sen_port_velocity_m_s, stuart_number, hartmann_number,
      computed_at)
    values (@slabId, @castingSpeedMPerMin, @castingSpeedSource, @speedMinMPerMin, @speedMaxMPerMin, @speedChangeMPerMin, @superheatC,
      @superheatSource, @embrCurrentA, @embrCurrentSource, @senDepthMm, @senDepthSource, @argonNlPerMin, @argonSource, @moldLevelSdMm,
      @moldLevelSdSource, @sampleCount, @throughputTPerMin, @moldDwellMin, @shellExitMm, @metallurgicalLengthM, @embrFieldT,
      @senPortVelocityMPerS, @stuartNumber, @hartmannNumber, @computedAt)
    on conflict(slab_id) do update set casting_speed_m_min = excluded.casting_speed_m_min, casting_speed_source = excluded.casting_speed_source,
      speed_min_m_min = excluded.speed_min_m_min, speed_max_m_min = excluded.speed_max_m_min, speed_change_m_min = excluded.speed_change_m_min,
      superheat_c = excluded.superheat_c, superheat_source = excluded.superheat_source, embr_current_a = excluded.embr_current_a,
      embr_current_source = excluded.embr_current_source, sen_depth_mm = excluded.sen_depth_mm, sen_depth_source = excluded.sen_depth_source,
      argon_nl_min = excluded.argon_nl_min, argon_source = excluded.argon_source, mold_level_sd_mm = excluded.mold_level_sd_mm,
      mold_level_sd_source = excluded.mold_level_sd_source, sample_count = excluded.sample_count, throughput_t_min = excluded.throughput_t_min,
      mold_dwell_min = excluded.mold_dwell_min, shell_exit_mm = excluded.shell_exit_mm, metallurgical_length_m = excluded.metallurgical_length_m,
      embr_field_t = excluded.embr_field_t, sen_port_velocity_m_s = excluded.sen_port_velocity_m_s, stuart_number = excluded.stuart_number,
      hartmann_number = excluded.hartmann_number, computed_at = excluded.computed_at`);

  const one = (r: SlabRow, now: number) => {
    const strand = strands.get(r.strandId)!;
    const windowStart = r.heatCastStart - WINDOW_MARGIN_MS;
    const windowEnd = (r.heatCastEnd ?? r.heatCastStart + OPEN_HEAT_MS) + WINDOW_MARGIN_MS;
    let agg: SampleAggregate | null;
    let placedAt: number | null = null;
    if (r.castLengthStartM != null) {
      agg = toAggregate(byLength.get(r.strandId, windowStart, windowEnd, r.castLengthStartM, r.castLengthStartM + r.lengthMm / 1000) as AggRow);
      placedAt = agg?.firstSampleAt ?? null;
    } else {
      const speed = r.castingSpeedMPerMin ?? r.heatSpeed;
      if (speed && speed > 0) {
        const beforeM = (piecesBefore.get(r.heatId, r.strandId, r.pieceNo) as number) / 1000;
        const t0 = r.castAt ?? r.heatCastStart + (beforeM / speed) * 60_000;
        const t1 = t0 + (r.lengthMm / 1000 / speed) * 60_000;
        agg = toAggregate(byTime.get(r.strandId, t0, t1) as AggRow);
        placedAt = t0;
      } else {
        agg = null;
      }
    }
    if (r.castAt == null && placedAt != null) setCastAt.run(Math.round(placedAt), r.id);
    const resolved = resolveConditions({
      slab: r,
      heat: {
        castingSpeedMPerMin: r.heatSpeed, superheatC: r.heatSuperheat, liquidusC: r.heatLiquidus, embrCurrentA: r.heatEmbr,
        senDepthMm: r.heatSen, argonNlPerMin: r.heatArgon, moldLevelSdMm: r.heatLevelSd,
      },
      samples: agg,
      strand,
      settings,
    });
    upsert.run({ slabId: r.id, ...resolved, computedAt: now });
  };

  return {
    resolve(ids) {
      const list = [...new Set(ids)];
      const now = Date.now();
      let n = 0;
      for (let i = 0; i < list.length; i += 500) {
        const chunk = list.slice(i, i + 500);
        const rows = sqlite.prepare(`${SLAB_SELECT} where s.id in (${chunk.map(() => "?").join(",")})`).all(...chunk) as SlabRow[];
        for (const r of rows) {
          one(r, now);
          n++;
        }
      }
      return n;
    },
    resolveAll() {
      // Paged by id: better-sqlite3 cannot write while a read is still being iterated.
      const page = sqlite.prepare(`${SLAB_SELECT} where s.id > ? order by s.id limit 2000`);
      const now = Date.now();
      let n = 0;
      let last = 0;
      for (;;) {
        const rows = page.all(last) as SlabRow[];
        if (rows.length === 0) break;
        for (const r of rows) one(r, now);
        n += rows.length;
        last = rows[rows.length - 1]!.id;
      }
      return n;
    },
  };
}
