/** Rates by period, the Pareto of defect types, rates by grade and by strand. */
import type { z } from "zod";
import type { Overview, overviewQuerySchema } from "@shared/api/reports";
import type { Db } from "../../db/client";
import { ratePer } from "../../stats/proportions";
import { byPeriod, defectsByPeriod } from "./periods";
import { buildScope, finite, proportion, scan } from "./scope";
import { standardisedByPeriod } from "./strata";

export function overview(db: Db, q: z.output<typeof overviewQuerySchema>): Overview {
  const scope = buildScope(db, q);
  const sc = scan(db, scope);
  const f = sc.facts;
  const slabRows = byPeriod(sc, q.period, true);
  // The defects passing the defect filters, on slabs within the slab filters.
  const { byPeriod: defectsBy, byType } = defectsByPeriod(db, scope, sc, q.period);
  const row = (n: number, x: number, t: number, d: number) => ({
    ...proportion(n, x),
    defects: d,
    tonnes: t,
    per100Slabs: finite(ratePer(d, n, 100)),
    per1000t: finite(ratePer(d, t, 1000)),
  });
  const std = q.standardise ? standardisedByPeriod(db, sc, q.period) : null;
  const periods = slabRows.map((r) => ({
    period: r.period,
    ...row(r.n, r.x, r.t, defectsBy.get(r.period) ?? 0),
    ...(std ? { standardised: std.rates.get(r.period)! } : {}),
  }));
  const tot = slabRows.reduce((s, r) => ({ n: s.n + r.n, x: s.x + r.x, t: s.t + r.t }), { n: 0, x: 0, t: 0 });
  const totalDefects = [...defectsBy.values()].reduce((s, v) => s + v, 0);
  const types = new Map(
    (db.$client.prepare("select id, code, name from defect_types").all() as { id: number; code: string; name: string }[]).map((t) => [t.id, t]),
  );
  const paretoRows = [...byType.entries()]
    .map(([id, t]) => ({ code: types.get(id)!.code, name: types.get(id)!.name, defects: t.defects, slabs: t.slabs }))
    .sort((a, b) => b.defects - a.defects || a.code.localeCompare(b.code));
  const paretoTotal = paretoRows.reduce((s, r) => s + r.defects, 0);
  let cum = 0;
  const pareto = paretoRows.map((r) => {
    cum += r.defects;
    return { code: r.code, name: r.name, defects: r.defects, slabsAffected: r.slabs, share: r.defects / paretoTotal, cumulativeShare: cum / paretoTotal };
  });
  const countBy = (key: ArrayLike<number>) => {
    const m = new Map<number, { n: number; x: number }>();
    for (const i of sc.rows) {
      let c = m.get(key[i]!);
      if (!c) m.set(key[i]!, (c = { n: 0, x: 0 }));
      c.n++;
      c.x += sc.affected[i]!;
    }
    return m;
  };
  const gradeNames = new Map(
    (
      db.$client.prepare("select g.id, g.code, f.code as family from grades g join grade_families f on f.id = g.family_id").all() as {
        id: number;
        code: string;
        family: string;
      }[]
    ).map((g) => [g.id, g]),
  );
  const byGrade = [...countBy(f.gradeId).entries()]
    .map(([id, c]) => ({ grade: gradeNames.get(id)?.code ?? String(id), family: gradeNames.get(id)?.family ?? "", ...proportion(c.n, c.x) }))
    .sort((a, b) => a.grade.localeCompare(b.grade));
  const strandNames = new Map(
    (
      db.$client.prepare("select s.id, s.strand_no, c.code from strands s join casters c on c.id = s.caster_id").all() as {
        id: number;
        strand_no: number;
        code: string;
      }[]
    ).map((x) => [x.id, x]),
  );
  const byStrand = [...countBy(f.strandId).entries()]
    .map(([id, c]) => ({ caster: strandNames.get(id)?.code ?? "", strand: strandNames.get(id)?.strand_no ?? 0, ...proportion(c.n, c.x) }))
    .sort((a, b) => a.caster.localeCompare(b.caster) || a.strand - b.strand);
  return {
    period: q.period,
    totals: row(tot.n, tot.x, tot.t, totalDefects),
    periods,
    pareto,
    byGrade,
    byStrand,
    ...(std ? { standardisation: std.standardisation } : {}),
    notes: std?.notes ?? [],
  };
}
