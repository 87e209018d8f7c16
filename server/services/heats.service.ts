import { causesBrief } from "./causes.service";
import type { HeatDetail, HeatList, HeatListQuery, HeatSamples, ResolvedConditions, SlabDetail } from "@shared/api/heats";
import type { Db } from "../db/client";
import type { EmbrCalibration } from "../db/schema";
import { parseDateBound } from "../lib/dates";
import { notFound, said } from "../lib/http-error";
import { deriveValues } from "./conditions.service";
import { windowFlagsForSlabs } from "./operating-windows.service";
import { risksOfSlabs } from "./risk/risk.service";
import { getPlantSettings } from "./settings.service";

const iso = (ms: number | null | undefined) => (ms == null ? null : new Date(ms).toISOString());

const SORT_SQL: Record<HeatListQuery["sort"], string> = {
  castStart: "h.cast_start",
  heatNo: "h.heat_no",
  sequenceNo: "q.sequence_no",
  gradeCode: "g.code",
  castingSpeed: "h.casting_speed_m_min",
  superheat: "h.superheat_c",
  slabs: "slabs",
  defects: "defects",
};

/** Heats with their slab and defect counts; filtering, sorting and paging happen in SQL. */
export function listHeats(db: Db, q: HeatListQuery): HeatList {
  const where: string[] = [];
  const params: Record<string, unknown> = {};
  if (q.q) {
    // Prefix ranges keep the unique indexes in use.
    params.p = q.q.toUpperCase();
    params.pe = q.q.toUpperCase() + "\uffff";
    where.push("((h.heat_no >= @p and h.heat_no < @pe) or (q.sequence_no >= @p and q.sequence_no < @pe) or (upper(g.code) >= @p and upper(g.code) < @pe))");
  }
  if (q.grade) {
    params.grade = q.grade;
    where.push("g.code = @grade");
  }
  if (q.family) {
    params.family = q.family;
    where.push("f.code = @family");
  }
  if (q.caster) {
    params.caster = q.caster;
    where.push("c.code = @caster");
  }
  const from = parseDateBound(q.from, false, "from");
  const to = parseDateBound(q.to, true, "to");
  if (from !== undefined) {
    params.from = from;
    where.push("h.cast_start >= @from");
  }
  if (to !== undefined) {
    params.to = to;
    where.push("h.cast_start <= @to");
  }
  const whereSql = where.length ? `where ${where.join(" and ")}` : "";
  const base = `from heats h join grades g on g.id = h.grade_id join grade_families f on f.id = g.family_id
    join casters c on c.id = h.caster_id left join sequences q on q.id = h.sequence_id ${whereSql}`;
  const total = db.$client.prepare(`select count(*) ${base}`).pluck().get(params) as number;
  const order = `${SORT_SQL[q.sort]} ${q.dir === "asc" ? "asc" : "desc"} nulls last, h.id ${q.dir === "asc" ? "asc" : "desc"}`;
  const rows = db.$client
    .prepare(
      `select h.heat_no as heatNo, q.sequence_no as sequenceNo, h.sequence_position as sequencePosition, c.code as casterCode,
         g.code as gradeCode, f.code as familyCode, h.cast_start as castStart, h.cast_end as castEnd,
         h.casting_speed_m_min as castingSpeedMPerMin, h.superheat_c as superheatC, h.embr_current_a as embrCurrentA,
         h.sen_depth_mm as senDepthMm,
         (select count(*) from slabs s where s.heat_id = h.id) as slabs,
         (select count(*) from slabs s join defects d on d.slab_id = s.id where s.heat_id = h.id and d.deleted_at is null and d.review_status <> 'rejected') as defects,
         (select count(distinct s.id) from slabs s join defects d on d.slab_id = s.id where s.heat_id = h.id and d.deleted_at is null and d.review_status <> 'rejected') as affectedSlabs
       ${base} order by ${order} limit @limit offset @offset`,
    )
    .all({ ...params, limit: q.pageSize, offset: (q.page - 1) * q.pageSize }) as (Omit<HeatList["items"][number], "castStart" | "castEnd"> & {
    castStart: number;
    castEnd: number | null;
  })[];
  return {
    items: rows.map((r) => ({ ...r, castStart: iso(r.castStart)!, castEnd: iso(r.castEnd) })),
    total,
    page: q.page,
    pageSize: q.pageSize,
  };
}

const CONDITION_COLUMNS = `c.casting_speed_m_min as castingSpeedMPerMin, c.casting_speed_source as castingSpeedSource,
  c.speed_min_m_min as speedMinMPerMin, c.speed_max_m_min as speedMaxMPerMin, c.speed_change_m_min as speedChangeMPerMin,
  c.superheat_c as superheatC, c.superheat_source as superheatSource, c.embr_current_a as embrCurrentA,
  c.embr_current_source as embrCurrentSource, c.sen_depth_mm as senDepthMm, c.sen_depth_source as senDepthSource,
  c.argon_nl_min as argonNlPerMin, c.argon_source as argonSource, c.mold_level_sd_mm as moldLevelSdMm,
  c.mold_level_sd_source as moldLevelSdSource, c.sample_count as sampleCount, c.throughput_t_min as throughputTPerMin,
  c.mold_dwell_min as moldDwellMin, c.shell_exit_mm as shellExitMm, c.metallurgical_length_m as metallurgicalLengthM,
  c.embr_field_t as embrFieldT, c.sen_port_velocity_m_s as senPortVelocityMPerS, c.stuart_number as stuartNumber,
  c.hartmann_number as hartmannNumber`;

const CONDITION_KEYS = [
  "castingSpeedMPerMin",
  "castingSpeedSource",
  "speedMinMPerMin",
  "speedMaxMPerMin",
  "speedChangeMPerMin",
  "superheatC",
  "superheatSource",
  "embrCurrentA",
  "embrCurrentSource",
  "senDepthMm",
  "senDepthSource",
  "argonNlPerMin",
  "argonSource",
  "moldLevelSdMm",
  "moldLevelSdSource",
  "sampleCount",
  "throughputTPerMin",
  "moldDwellMin",
  "shellExitMm",
  "metallurgicalLengthM",
  "embrFieldT",
  "senPortVelocityMPerS",
  "stuartNumber",
  "hartmannNumber",
] as const;

function splitConditions<T extends Record<string, unknown>>(row: T & { hasConditions: number | null }): ResolvedConditions | null {
  if (!row.hasConditions) return null;
  const out: Record<string, unknown> = {};
  for (const k of CONDITION_KEYS) out[k] = row[k];
  return out as ResolvedConditions;
}

export function getHeat(db: Db, heatNo: string): HeatDetail {
  const c = db.$client;
  const h = c
    .prepare(
      `select h.*, q.sequence_no as sequenceNo, ca.code as casterCode, ca.name as casterName, g.code as gradeCode, g.name as gradeName,
         f.code as familyCode, f.name as familyName
       from heats h join casters ca on ca.id = h.caster_id join grades g on g.id = h.grade_id join grade_families f on f.id = g.family_id
       left join sequences q on q.id = h.sequence_id where h.heat_no = ?`,
    )
    .get(heatNo) as Record<string, any> | undefined;
  if (!h) throw notFound(said("heats.noHeat", { heat: heatNo }));
  const neighbours = h.sequence_id
    ? (c.prepare("select heat_no, sequence_position from heats where sequence_id = ? order by sequence_position, cast_start").all(h.sequence_id) as {
        heat_no: string;
        sequence_position: number;
      }[])
    : [];
  const idx = neighbours.findIndex((n) => n.heat_no === h.heat_no);
  const slabs = c
    .prepare(
      `select s.id as rowId, s.slab_id as slabId, st.strand_no as strandNo, s.piece_no as pieceNo, s.length_mm as lengthMm, s.width_mm as widthMm,
         s.thickness_mm as thicknessMm, s.weight_t as weightT, s.cast_length_start_m as castLengthStartM, s.cast_at as castAt,
         s.transition, s.disposition,
         (select count(*) from defects d where d.slab_id = s.id and d.deleted_at is null and d.review_status <> 'rejected') as defects,
         c.slab_id as hasConditions, ${CONDITION_COLUMNS}
       from slabs s join strands st on st.id = s.strand_id left join slab_conditions c on c.slab_id = s.id
       where s.heat_id = ? order by st.strand_no, s.piece_no`,
    )
    .all(h.id) as Record<string, any>[];
  const risks = risksOfSlabs(
    db,
    slabs.map((s) => s.rowId as number),
  );
  const flags = windowFlagsForSlabs(
    db,
    slabs.map((s) => s.rowId as number),
  );
  const settings = getPlantSettings(db);
  const strandRows = c
    .prepare(
      `select id, strand_no as strandNo, mold_effective_length_mm as moldEffectiveLengthMm, sen_port_area_mm2 as senPortAreaMm2,
         sen_port_count as senPortCount, embr_calibration as cal, mold_thickness_mm as moldThicknessMm
       from strands where caster_id = ? order by strand_no`,
    )
    .all(h.caster_id) as {
    id: number;
    strandNo: number;
    moldEffectiveLengthMm: number;
    senPortAreaMm2: number;
    senPortCount: number;
    cal: string;
    moldThicknessMm: number;
  }[];
  const derived = strandRows.map((st) => {
    const own = slabs.filter((s) => s.strandNo === st.strandNo);
    const widthMm = own.length ? own.reduce((a, s) => a + s.widthMm, 0) / own.length : null;
    const thicknessMm = own.length ? own[0]!.thicknessMm : st.moldThicknessMm;
    const d = deriveValues(
      h.casting_speed_m_min,
      h.embr_current_a,
      widthMm,
      thicknessMm,
      { ...st, embrCalibration: JSON.parse(st.cal) as EmbrCalibration },
      settings,
    );
    return { strandNo: st.strandNo, widthMm, ...d };
  });
  const sampleCount = c
    .prepare(`select count(*) from process_samples where strand_id in (select id from strands where caster_id = ?) and sampled_at between ? and ?`)
    .pluck()
    .get(h.caster_id, h.cast_start, h.cast_end ?? h.cast_start + 4 * 3_600_000) as number;
  return {
    heatNo: h.heat_no,
    sequenceNo: h.sequenceNo ?? null,
    sequencePosition: h.sequence_position ?? null,
    sequenceHeats: h.sequence_id ? neighbours.length : null,
    previousHeatNo: idx > 0 ? neighbours[idx - 1]!.heat_no : null,
    nextHeatNo: idx >= 0 && idx < neighbours.length - 1 ? neighbours[idx + 1]!.heat_no : null,
    caster: { code: h.casterCode, name: h.casterName },
    grade: { code: h.gradeCode, name: h.gradeName, familyCode: h.familyCode, familyName: h.familyName },
    castStart: iso(h.cast_start)!,
    castEnd: iso(h.cast_end),
    ladleWeightT: h.ladle_weight_t,
    tundishChange: Boolean(h.tundish_change),
    conditions: {
      castingSpeedMPerMin: h.casting_speed_m_min,
      tundishTempC: h.tundish_temp_c,
      liquidusC: h.liquidus_c,
      liquidusSource: h.liquidus_source,
      superheatC: h.superheat_c,
      superheatSource: h.superheat_source,
      embrCurrentA: h.embr_current_a,
      senDepthMm: h.sen_depth_mm,
      argonNlPerMin: h.argon_nl_min,
      moldLevelSdMm: h.mold_level_sd_mm,
    },
    chemistry: {
      cPct: h.c_pct,
      siPct: h.si_pct,
      mnPct: h.mn_pct,
      pPct: h.p_pct,
      sPct: h.s_pct,
      alPct: h.al_pct,
      cuPct: h.cu_pct,
      niPct: h.ni_pct,
      crPct: h.cr_pct,
      moPct: h.mo_pct,
      tiPct: h.ti_pct,
      nbPct: h.nb_pct,
      vPct: h.v_pct,
      nPpm: h.n_ppm,
    },
    derived,
    slabs: slabs.map((s) => ({
      slabId: s.slabId,
      strandNo: s.strandNo,
      pieceNo: s.pieceNo,
      lengthMm: s.lengthMm,
      widthMm: s.widthMm,
      thicknessMm: s.thicknessMm,
      weightT: s.weightT,
      castLengthStartM: s.castLengthStartM,
      castAt: iso(s.castAt),
      transition: Boolean(s.transition),
      disposition: s.disposition,
      defects: s.defects,
      conditions: splitConditions(s as never),
      risk: risks.get(s.rowId)?.[0] ?? null,
      windowFlags: (flags.get(s.rowId) ?? []).map((f) => f.name),
    })),
    sampleCount,
  };
}

/** The heat's process samples per strand, thinned evenly to at most maxPoints each, for its chart. */
export function getHeatSamples(db: Db, heatNo: string, maxPoints: number): HeatSamples {
  const c = db.$client;
  const h = c.prepare("select id, caster_id, cast_start, cast_end from heats where heat_no = ?").get(heatNo) as
    { id: number; caster_id: number; cast_start: number; cast_end: number | null } | undefined;
  if (!h) throw notFound(said("heats.noHeat", { heat: heatNo }));
  const end = h.cast_end ?? h.cast_start + 4 * 3_600_000;
  const strands = c.prepare("select id, strand_no from strands where caster_id = ? order by strand_no").all(h.caster_id) as { id: number; strand_no: number }[];
  const count = c.prepare("select count(*) from process_samples where strand_id = ? and sampled_at between ? and ?").pluck();
  const rows = c
    .prepare(
      `select sampled_at, cast_length_m, casting_speed_m_min, tundish_temp_c, embr_current_a, sen_depth_mm, argon_nl_min, mold_level_mm
     from (select *, row_number() over (order by sampled_at) as rn from process_samples where strand_id = @strand and sampled_at between @start and @end)
     where (rn - 1) % @step = 0 order by sampled_at`,
    )
    .raw();
  return {
    heatNo,
    strands: strands.map((s) => {
      const total = count.get(s.id, h.cast_start, end) as number;
      const step = Math.max(1, Math.ceil(total / maxPoints));
      const points = (rows.all({ strand: s.id, start: h.cast_start, end, step }) as (number | null)[][]).map(
        (r) =>
          [
            new Date(r[0]!).toISOString(),
            r[1] ?? null,
            r[2] ?? null,
            r[3] ?? null,
            r[4] ?? null,
            r[5] ?? null,
            r[6] ?? null,
            r[7] ?? null,
          ] as HeatSamples["strands"][number]["points"][number],
      );
      return { strandNo: s.strand_no, total, points };
    }),
  };
}

/** `readsCauses`: whether the caller holds causes.read; without it the defects' causes stay empty. */
export function getSlab(db: Db, slabId: string, readsCauses: boolean): SlabDetail {
  const c = db.$client;
  const s = c
    .prepare(
      `select s.*, h.heat_no as heatNo, g.code as gradeCode, f.code as familyCode, ca.code as casterCode, st.strand_no as strandNo,
         c.slab_id as hasConditions, ${CONDITION_COLUMNS}
       from slabs s join heats h on h.id = s.heat_id join grades g on g.id = h.grade_id join grade_families f on f.id = g.family_id
       join casters ca on ca.id = h.caster_id join strands st on st.id = s.strand_id left join slab_conditions c on c.slab_id = s.id
       where s.slab_id = ?`,
    )
    .get(slabId.trim().toUpperCase()) as Record<string, any> | undefined;
  if (!s) throw notFound(said("heats.noSlab", { slab: slabId }));
  const defects = c
    .prepare(
      `select d.id, t.code as typeCode, t.name as typeName, d.face, d.position_along_mm as positionAlongMm,
         d.position_across_mm as positionAcrossMm, d.length_mm as lengthMm, d.width_mm as widthMm, d.depth_mm as depthMm,
         d.severity, d.stage, d.disposition, d.review_status as reviewStatus, d.note, d.found_at as foundAt,
         (select count(*) from defect_photos p where p.defect_id = d.id and p.deleted_at is null) as photoCount,
         u.name as createdByName
       from defects d join defect_types t on t.id = d.type_id left join user u on u.id = d.created_by
       where d.slab_id = ? and d.deleted_at is null order by d.found_at, d.id`,
    )
    .all(s.id) as Record<string, any>[];
  const causes = readsCauses
    ? causesBrief(
        c,
        defects.map((d) => d.id as number),
      )
    : new Map<number, never[]>();
  return {
    slabId: s.slab_id,
    heatNo: s.heatNo,
    gradeCode: s.gradeCode,
    familyCode: s.familyCode,
    casterCode: s.casterCode,
    strandNo: s.strandNo,
    pieceNo: s.piece_no,
    lengthMm: s.length_mm,
    widthMm: s.width_mm,
    thicknessMm: s.thickness_mm,
    weightT: s.weight_t,
    weightSource: s.weight_source,
    castLengthStartM: s.cast_length_start_m,
    castAt: iso(s.cast_at),
    transition: Boolean(s.transition),
    disposition: s.disposition,
    given: {
      castingSpeedMPerMin: s.casting_speed_m_min,
      superheatC: s.superheat_c,
      embrCurrentA: s.embr_current_a,
      senDepthMm: s.sen_depth_mm,
      argonNlPerMin: s.argon_nl_min,
      moldLevelSdMm: s.mold_level_sd_mm,
    },
    conditions: splitConditions({
      hasConditions: s.hasConditions,
      castingSpeedMPerMin: s.castingSpeedMPerMin,
      castingSpeedSource: s.castingSpeedSource,
      speedMinMPerMin: s.speedMinMPerMin,
      speedMaxMPerMin: s.speedMaxMPerMin,
      speedChangeMPerMin: s.speedChangeMPerMin,
      superheatC: s.superheatC,
      superheatSource: s.superheatSource,
      embrCurrentA: s.embrCurrentA,
      embrCurrentSource: s.embrCurrentSource,
      senDepthMm: s.senDepthMm,
      senDepthSource: s.senDepthSource,
      argonNlPerMin: s.argonNlPerMin,
      argonSource: s.argonSource,
      moldLevelSdMm: s.moldLevelSdMm,
      moldLevelSdSource: s.moldLevelSdSource,
      sampleCount: s.sampleCount,
      throughputTPerMin: s.throughputTPerMin,
      moldDwellMin: s.moldDwellMin,
      shellExitMm: s.shellExitMm,
      metallurgicalLengthM: s.metallurgicalLengthM,
      embrFieldT: s.embrFieldT,
      senPortVelocityMPerS: s.senPortVelocityMPerS,
      stuartNumber: s.stuartNumber,
      hartmannNumber: s.hartmannNumber,
    }),
    defects: defects.map((d) => ({ ...d, foundAt: iso(d.foundAt)!, note: d.note ?? null, causes: causes.get(d.id) ?? [] })) as SlabDetail["defects"],
    risks: risksOfSlabs(db, [s.id as number]).get(s.id as number) ?? [],
    windowFlags: (windowFlagsForSlabs(db, [s.id as number]).get(s.id as number) ?? []).map((f) => f.name),
  };
}
