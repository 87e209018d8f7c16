/**
 * A plant made for the adjusted-association tests, where the crude answer points at the wrong lever
 * (issue 12). Slag spots (SLG) depend on mold-level fluctuation, superheat and brake current only.
 * One grade family (LC, grade LV-DQ10) is cast faster AND has a higher base rate; the other (PER,
 * grade LV-ST32) is cast slower with a lower base rate. Within a family, casting speed has no effect
 * at all, so the crude odds ratio for speed is large and the one adjusted for the family is near 1.
 *
 * Heat-level values: each heat has its own speed, superheat, brake current and mold-level
 * fluctuation, shared by its slabs (as a plant's heat averages are), so slabs of one heat are not
 * independent — the case for heat-clustered standard errors. Seeded: the same plant every run.
 *
 * The true model, per slab (logit scale):
 *   −3.2 + 1.6·[family LC] + 0.9·(mold_level_sd_mm − 3) − 0.04·(superheat_c − 25) − 0.004·(embr_current_a − 300)
 * with no term in casting speed.
 */
import type { Db } from "../../server/db/client";
import { createResolver } from "../../server/services/conditions.service";
import { createRandom } from "../../server/seed/random";

export interface ConfoundedPlant {
  heats: number;
  slabs: number;
  affected: number;
  /** The true logit coefficients, for the tests' expectations. */
  truth: { intercept: number; familyLC: number; moldLevelSdMm: number; superheatC: number; embrCurrentA: number; castingSpeed: 0 };
  /** Cast dates the plant spans (UTC, YYYY-MM-DD). */
  from: string;
  to: string;
}

export const CONFOUNDED_TRUTH = { intercept: -3.2, familyLC: 1.6, moldLevelSdMm: 0.9, superheatC: -0.04, embrCurrentA: -0.004, castingSpeed: 0 as const };

/**
 * What a test plant writes with: the reference rows it hangs on (caster CC2 and its two strands, an LC
 * and a PER grade, the slag-spot and crack types, the demo inspector) and the insert statements.
 */
export function plantWriter(db: Db) {
  const c = db.$client;
  const one = (sql: string, ...a: unknown[]) =>
    c
      .prepare(sql)
      .pluck()
      .get(...a) as number;
  const caster = one("select id from casters where code = 'CC2'");
  const strands = [
    one("select id from strands where caster_id = ? and strand_no = 1", caster),
    one("select id from strands where caster_id = ? and strand_no = 2", caster),
  ];
  const gradeLC = one("select id from grades where code = 'LV-DQ10'");
  const gradePER = one("select id from grades where code = 'LV-ST32'");
  const slg = one("select id from defect_types where code = 'SLG'");
  const inspector = c.prepare("select id from user where email = 'inspector@demo.test'").pluck().get() as string;
  const heatIns = c.prepare(
    `insert into heats (heat_no, caster_id, grade_id, cast_start, cast_end, casting_speed_m_min, tundish_temp_c, liquidus_c, superheat_c, embr_current_a, sen_depth_mm, argon_nl_min, mold_level_sd_mm, c_pct, si_pct, mn_pct, p_pct, s_pct)
     values (?, ?, ?, ?, ?, ?, ?, 1520, ?, ?, 160, 8, ?, ?, 0.2, 0.9, 0.015, 0.008)`,
  );
  const slabIns = c.prepare(
    "insert into slabs (slab_id, heat_id, strand_id, piece_no, length_mm, width_mm, thickness_mm, weight_t, cast_at) values (?, ?, ?, ?, 10000, 1500, 230, 26.91, ?)",
  );
  const defIns = c.prepare(
    "insert into defects (slab_id, type_id, face, position_along_mm, position_across_mm, severity, stage, disposition, found_at, created_by, review_status) values (?, ?, 'inner', 2500, 300, 2, 'slab_yard', 'scarf', ?, ?, 'confirmed')",
  );
  const lfc = one("select id from defect_types where code = 'LFC'");
  return { c, caster, strands, gradeLC, gradePER, slg, lfc, inspector, heatIns, slabIns, defIns };
}

/** Builds the plant into a database that holds the reference data (createTestApp({ production: false })). */
export function buildConfoundedPlant(db: Db, opts: { heats?: number; slabsPerHeat?: number; seed?: number; start?: number } = {}): ConfoundedPlant {
  const heats = opts.heats ?? 1000;
  const perHeat = opts.slabsPerHeat ?? 8;
  const r = createRandom(opts.seed ?? 20261202);
  const start = opts.start ?? Date.UTC(2027, 0, 4, 6);
  const { c, caster, strands, gradeLC, gradePER, slg, inspector, heatIns, slabIns, defIns } = plantWriter(db);
  const t = CONFOUNDED_TRUTH;
  let slabs = 0;
  let affected = 0;
  c.transaction(() => {
    for (let h = 0; h < heats; h++) {
      const lc = h % 2 === 0;
      const castStart = start + h * 90 * 60_000;
      // Family LC is cast faster; within a family the speed varies but does nothing.
      const speed = Math.round((lc ? r.normal(1.75, 0.12) : r.normal(1.25, 0.12)) * 100) / 100;
      const superheat = Math.round(r.normal(25, 6) * 10) / 10;
      const embr = Math.round(r.uniform(0, 600));
      const mold = Math.round(Math.max(0.5, r.normal(3, 1)) * 100) / 100;
      const heatId = Number(
        heatIns.run(
          `CF${String(h).padStart(5, "0")}`,
          caster,
          lc ? gradeLC : gradePER,
          castStart,
          castStart + 60 * 60_000,
          speed,
          1520 + superheat,
          superheat,
          embr,
          mold,
          lc ? 0.04 : 0.12,
        ).lastInsertRowid,
      );
      const eta = t.intercept + (lc ? t.familyLC : 0) + t.moldLevelSdMm * (mold - 3) + t.superheatC * (superheat - 25) + t.embrCurrentA * (embr - 300);
      const p = 1 / (1 + Math.exp(-eta));
      for (let s = 0; s < perHeat; s++) {
        const strand = strands[s % 2]!;
        const slabId = Number(
          slabIns.run(`CF${String(h).padStart(5, "0")}-${s + 1}`, heatId, strand, Math.floor(s / 2) + 1, castStart + s * 7 * 60_000).lastInsertRowid,
        );
        slabs++;
        if (r.chance(p)) {
          defIns.run(slabId, slg, castStart + 86_400_000, inspector);
          affected++;
        }
      }
    }
  })();
  createResolver(db).resolveAll();
  const day = (ms: number) => new Date(ms).toISOString().slice(0, 10);
  return { heats, slabs, affected, truth: t, from: day(start), to: day(start + heats * 90 * 60_000) };
}
