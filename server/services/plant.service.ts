import { asc } from "drizzle-orm";
import type { PlantSetup, PlantSummary, SlabHit } from "@shared/api/plant";
import type { Db } from "../db/client";
import { casters, gradeFamilies, grades, strands } from "../db/schema";

const DAY = 86_400_000;

/** Upper bound for a prefix range scan, so the unique index on the id serves the type-ahead. */
const prefixEnd = (p: string) => p + "\uffff";

export function searchSlabs(db: Db, q: string, limit: number): SlabHit[] {
  const prefix = q.trim().toUpperCase();
  const rows = db.$client
    .prepare(
      `select s.slab_id as slabId, h.heat_no as heatNo, st.strand_no as strandNo, g.code as gradeCode, s.cast_at as castAt,
         (select count(*) from defects d where d.slab_id = s.id and d.deleted_at is null) as defectCount
       from slabs s join heats h on h.id = s.heat_id join strands st on st.id = s.strand_id join grades g on g.id = h.grade_id
       where s.id in (
         select id from slabs where slab_id >= @p and slab_id < @pe
         union select s2.id from heats h2 join slabs s2 on s2.heat_id = h2.id where h2.heat_no >= @p and h2.heat_no < @pe
         limit 200)
       order by (s.slab_id = @p) desc, s.slab_id limit @limit`,
    )
    .all({ p: prefix, pe: prefixEnd(prefix), limit }) as (Omit<SlabHit, "castAt"> & { castAt: number | null })[];
  return rows.map((r) => ({ ...r, castAt: r.castAt == null ? null : new Date(r.castAt).toISOString() }));
}

export function plantSummary(db: Db): PlantSummary {
  const c = db.$client;
  const caster = c.prepare("select works_name as works, name from casters order by id limit 1").get() as { works: string; name: string } | undefined;
  const demo = c.prepare("select value from plant_settings where key = 'demo.plant'").pluck().get() as string | undefined;
  const totals = c
    .prepare(
      `select (select count(*) from heats) as heats, (select count(*) from slabs) as slabs,
              (select count(*) from defects where deleted_at is null and review_status <> 'rejected') as defects`,
    )
    .get() as PlantSummary["totals"];
  const last = c.prepare("select max(cast_at) from slabs").pluck().get() as number | null;
  const from = last == null ? null : last - 30 * DAY;
  const window = { from: from ?? 0, to: last ?? 0 };
  const recent = c
    .prepare(
      `select count(*) as slabs,
         sum(exists(select 1 from defects d where d.slab_id = s.id and d.deleted_at is null and d.review_status <> 'rejected')) as affectedSlabs
       from slabs s where s.cast_at >= @from and s.cast_at <= @to`,
    )
    .get(window) as { slabs: number; affectedSlabs: number | null };
  const defects = c
    .prepare(
      `select count(*) from defects d join slabs s on s.id = d.slab_id
       where s.cast_at >= @from and s.cast_at <= @to and d.deleted_at is null and d.review_status <> 'rejected'`,
    )
    .pluck()
    .get(window) as number;
  const awaitingReview = c.prepare("select count(*) from defects where review_status = 'new' and deleted_at is null").pluck().get() as number;
  const topTypes = c
    .prepare(
      `select t.code, t.name, count(*) as defects from defects d join slabs s on s.id = d.slab_id join defect_types t on t.id = d.type_id
       where s.cast_at >= @from and s.cast_at <= @to and d.deleted_at is null and d.review_status <> 'rejected'
       group by t.id order by defects desc, t.code limit 5`,
    )
    .all(window) as PlantSummary["recent"]["topTypes"];
  return {
    works: caster?.works ?? null,
    caster: caster?.name ?? null,
    demo: demo != null,
    totals,
    recent: {
      from: from == null ? null : new Date(from).toISOString(),
      to: last == null ? null : new Date(last).toISOString(),
      slabs: recent.slabs,
      affectedSlabs: recent.affectedSlabs ?? 0,
      defects,
      awaitingReview,
      topTypes,
    },
  };
}

export function plantSetup(db: Db): PlantSetup {
  const casterRows = db.select().from(casters).orderBy(asc(casters.code)).all();
  const strandRows = db.select().from(strands).orderBy(asc(strands.strandNo)).all();
  const familyRows = db.select().from(gradeFamilies).orderBy(asc(gradeFamilies.code)).all();
  const gradeRows = db.select().from(grades).orderBy(asc(grades.code)).all();
  return {
    casters: casterRows.map((c) => ({
      id: c.id,
      code: c.code,
      name: c.name,
      worksName: c.worksName,
      machineType: c.machineType,
      radiusM: c.radiusM,
      strands: strandRows
        .filter((s) => s.casterId === c.id)
        .map((s) => ({
          id: s.id,
          strandNo: s.strandNo,
          moldThicknessMm: s.moldThicknessMm,
          moldWidthMinMm: s.moldWidthMinMm,
          moldWidthMaxMm: s.moldWidthMaxMm,
          moldEffectiveLengthMm: s.moldEffectiveLengthMm,
          senPortAreaMm2: s.senPortAreaMm2,
          senPortCount: s.senPortCount,
          embrCalibration: s.embrCalibration,
          embrPositionMm: s.embrPositionMm,
        })),
    })),
    gradeFamilies: familyRows.map((f) => ({
      id: f.id,
      code: f.code,
      name: f.name,
      description: f.description,
      grades: gradeRows.filter((g) => g.familyId === f.id).map((g) => ({ id: g.id, code: g.code, name: g.name, active: g.active })),
    })),
  };
}
