import type { CasterCreate, PlantSettings, StrandUpdate } from "@shared/api/heats";
import type { z } from "zod";
import type { gradeFamilyInputSchema, gradeInputSchema, gradeUpdateSchema } from "@shared/api/heats";
import type { Db } from "../db/client";
import { conflict, notFound, badRequest, said } from "../lib/http-error";
import { liquidusC } from "../metallurgy/liquidus";
import { recordAudit } from "./audit.service";
import { createResolver } from "./conditions.service";
import { slabFactsChanged } from "./report-cache";
import { getPlantSettings, writePlantSettings } from "./settings.service";

const PCT = ["c", "si", "mn", "p", "s", "al", "cu", "ni", "cr", "mo", "ti", "nb", "v"] as const;

/**
 * New formula settings: stored, audited, and followed at once by every value computed from them —
 * heats' computed liquidus and superheat, then every slab's resolved and derived conditions.
 */
export function updatePlantSettings(db: Db, next: PlantSettings, userId: string) {
  return db.transaction((tx) => {
    const before = getPlantSettings(tx);
    writePlantSettings(tx, next, userId);
    const sqlite = db.$client;
    const heats = sqlite
      .prepare(
        `select id, ${PCT.map((e) => `${e}_pct`).join(", ")}, tundish_temp_c, liquidus_source, superheat_source from heats where liquidus_source = 'computed' or superheat_source = 'computed'`,
      )
      .all() as Record<string, number | string | null>[];
    const setLiq = sqlite.prepare("update heats set liquidus_c = ? where id = ?");
    const setSh = sqlite.prepare("update heats set superheat_c = ? where id = ?");
    const getLiq = sqlite.prepare("select liquidus_c from heats where id = ?").pluck();
    for (const h of heats) {
      if (h.liquidus_source === "computed") {
        const chem = Object.fromEntries(PCT.map((e) => [e, h[`${e}_pct`] as number | null]));
        setLiq.run(liquidusC(chem, next.liquidus), h.id);
      }
      if (h.superheat_source === "computed" && h.tundish_temp_c != null) {
        const liq = getLiq.get(h.id) as number | null;
        if (liq != null) setSh.run((h.tundish_temp_c as number) - liq, h.id);
      }
    }
    const slabsResolved = createResolver(db).resolveAll();
    recordAudit(tx, { userId, action: "settings.update", entity: "plant_settings", entityId: "metallurgy", before, after: next });
    return { settings: getPlantSettings(tx), slabsResolved };
  });
}

export function updateStrand(db: Db, id: number, patch: StrandUpdate, userId: string) {
  return db.transaction((tx) => {
    const sqlite = db.$client;
    const before = sqlite.prepare("select * from strands where id = ?").get(id) as Record<string, any> | undefined;
    if (!before) throw notFound(said("setup.noStrand"));
    const cols: Record<keyof StrandUpdate, string> = {
      moldThicknessMm: "mold_thickness_mm",
      moldWidthMinMm: "mold_width_min_mm",
      moldWidthMaxMm: "mold_width_max_mm",
      moldEffectiveLengthMm: "mold_effective_length_mm",
      senPortAreaMm2: "sen_port_area_mm2",
      senPortCount: "sen_port_count",
      embrCalibration: "embr_calibration",
      embrPositionMm: "embr_position_mm",
    };
    const sets: string[] = [];
    const values: Record<string, unknown> = { id, now: Date.now() };
    for (const [k, v] of Object.entries(patch) as [keyof StrandUpdate, unknown][]) {
      sets.push(`${cols[k]} = @${k}`);
      values[k] = k === "embrCalibration" ? JSON.stringify(v) : v;
    }
    const min = (patch.moldWidthMinMm !== undefined ? patch.moldWidthMinMm : before.mold_width_min_mm) as number | null;
    const max = (patch.moldWidthMaxMm !== undefined ? patch.moldWidthMaxMm : before.mold_width_max_mm) as number | null;
    if (min != null && max != null && min > max) throw badRequest(said("setup.moldWidths"), { field: "moldWidthMinMm" });
    sqlite.prepare(`update strands set ${sets.join(", ")}, updated_at = @now where id = @id`).run(values);
    const after = sqlite.prepare("select * from strands where id = ?").get(id) as Record<string, any>;
    const strand = {
      id: after.id,
      strandNo: after.strand_no,
      moldThicknessMm: after.mold_thickness_mm,
      moldWidthMinMm: after.mold_width_min_mm,
      moldWidthMaxMm: after.mold_width_max_mm,
      moldEffectiveLengthMm: after.mold_effective_length_mm,
      senPortAreaMm2: after.sen_port_area_mm2,
      senPortCount: after.sen_port_count,
      embrCalibration: JSON.parse(after.embr_calibration),
      embrPositionMm: after.embr_position_mm,
    };
    const slabIds = sqlite.prepare("select id from slabs where strand_id = ?").pluck().all(id) as number[];
    const slabsResolved = createResolver(db).resolve(slabIds);
    recordAudit(tx, { userId, action: "strand.update", entity: "strand", entityId: id, before, after });
    return { strand, slabsResolved };
  });
}

export function createCaster(db: Db, input: CasterCreate, userId: string) {
  return db.transaction((tx) => {
    const sqlite = db.$client;
    if (sqlite.prepare("select 1 from casters where upper(code) = upper(?)").get(input.code)) throw conflict(said("setup.casterExists", { code: input.code }));
    const nos = input.strands.map((s) => s.strandNo);
    if (new Set(nos).size !== nos.length) throw badRequest(said("setup.strandTwice"), { field: "strands" });
    const id = Number(
      sqlite
        .prepare("insert into casters (code, name, works_name, machine_type, radius_m) values (?, ?, ?, ?, ?)")
        .run(input.code.toUpperCase(), input.name, input.worksName, input.machineType, input.radiusM).lastInsertRowid,
    );
    const ins = sqlite.prepare(
      `insert into strands (caster_id, strand_no, mold_thickness_mm, mold_effective_length_mm, sen_port_area_mm2, sen_port_count, embr_calibration)
       values (?, ?, ?, ?, ?, ?, ?)`,
    );
    for (const s of input.strands)
      ins.run(id, s.strandNo, s.moldThicknessMm, s.moldEffectiveLengthMm, s.senPortAreaMm2, s.senPortCount, JSON.stringify(s.embrCalibration));
    recordAudit(tx, { userId, action: "caster.create", entity: "caster", entityId: id, after: input });
    return { id, code: input.code.toUpperCase() };
  });
}

export function createGradeFamily(db: Db, input: z.infer<typeof gradeFamilyInputSchema>, userId: string) {
  return db.transaction((tx) => {
    const sqlite = db.$client;
    const code = input.code.toUpperCase();
    if (sqlite.prepare("select 1 from grade_families where upper(code) = ?").get(code)) throw conflict(said("setup.familyExists", { code }));
    const id = Number(
      sqlite.prepare("insert into grade_families (code, name, description) values (?, ?, ?)").run(code, input.name, input.description).lastInsertRowid,
    );
    recordAudit(tx, { userId, action: "grade_family.create", entity: "grade_family", entityId: id, after: { ...input, code } });
    return { id, code, name: input.name, description: input.description };
  });
}

export function updateGradeFamily(db: Db, code: string, input: { name?: string; description?: string | null }, userId: string) {
  return db.transaction((tx) => {
    const sqlite = db.$client;
    const before = sqlite.prepare("select * from grade_families where upper(code) = upper(?)").get(code) as Record<string, any> | undefined;
    if (!before) throw notFound(said("setup.noFamily", { code }));
    sqlite
      .prepare("update grade_families set name = ?, description = ?, updated_at = ? where id = ?")
      .run(input.name ?? before.name, input.description !== undefined ? input.description : before.description, Date.now(), before.id);
    const after = sqlite.prepare("select * from grade_families where id = ?").get(before.id) as Record<string, any>;
    recordAudit(tx, { userId, action: "grade_family.update", entity: "grade_family", entityId: before.id, before, after });
    return { id: after.id, code: after.code, name: after.name, description: after.description };
  });
}

function familyId(db: Db, code: string): number {
  const id = db.$client.prepare("select id from grade_families where upper(code) = upper(?)").pluck().get(code) as number | undefined;
  if (id === undefined) throw badRequest(said("setup.noFamily", { code }), { field: "familyCode" });
  return id;
}

export function createGrade(db: Db, input: z.infer<typeof gradeInputSchema>, userId: string) {
  return db.transaction((tx) => {
    const sqlite = db.$client;
    const code = input.code.toUpperCase();
    if (sqlite.prepare("select 1 from grades where upper(code) = ?").get(code)) throw conflict(said("setup.gradeExists", { code }));
    const fam = familyId(db, input.familyCode);
    const id = Number(
      sqlite.prepare("insert into grades (code, name, family_id, active) values (?, ?, ?, ?)").run(code, input.name, fam, input.active ? 1 : 0).lastInsertRowid,
    );
    recordAudit(tx, { userId, action: "grade.create", entity: "grade", entityId: id, after: { ...input, code } });
    return { id, code, name: input.name, familyCode: input.familyCode.toUpperCase(), active: input.active };
  });
}

export function updateGrade(db: Db, code: string, input: z.infer<typeof gradeUpdateSchema>, userId: string) {
  return db.transaction((tx) => {
    const sqlite = db.$client;
    const before = sqlite.prepare("select * from grades where upper(code) = upper(?)").get(code) as Record<string, any> | undefined;
    if (!before) throw notFound(said("setup.noGrade", { code }));
    const fam = input.familyCode ? familyId(db, input.familyCode) : before.family_id;
    sqlite
      .prepare("update grades set name = ?, family_id = ?, active = ?, updated_at = ? where id = ?")
      .run(input.name ?? before.name, fam, input.active === undefined ? before.active : input.active ? 1 : 0, Date.now(), before.id);
    const after = sqlite
      .prepare("select g.*, f.code as familyCode from grades g join grade_families f on f.id = g.family_id where g.id = ?")
      .get(before.id) as Record<string, any>;
    // The reports read the family from slab_conditions.
    if (after.family_id !== before.family_id) {
      sqlite.prepare("update slab_conditions set family_id = ? where grade_id = ?").run(after.family_id, before.id);
      slabFactsChanged(db);
    }
    recordAudit(tx, { userId, action: "grade.update", entity: "grade", entityId: before.id, before, after });
    return { id: after.id, code: after.code, name: after.name, familyCode: after.familyCode, active: Boolean(after.active) };
  });
}
