/**
 * The report scope: the filters every report takes turned into the set of slabs (scanned from the
 * slab facts, report-cache.ts) and which of them are affected (one indexed SQL query over the
 * defects passing the defect filters). Reports, exports, bulk cause tagging and the coming risk
 * models all start here. A continuous variable is grouped at a resolution ten times finer than it
 * is shown (e.g. casting speed to 0.001 m/min); ranks and fits treat equal grouped values as ties.
 */
import { scratch } from "../../stats/scratch";
import type Database from "better-sqlite3";
import type { ReportFilters } from "@shared/api/reports";
import { VARIABLES, type VariableSpec } from "@shared/variables";
import type { Db } from "../../db/client";
import { parseDateBound } from "../../lib/dates";
import { badRequest, said } from "../../lib/http-error";
import { wilson } from "../../stats/proportions";
import { normalizeGroups, type Group } from "../../stats/ranks";
import { eachPiece, slabFacts, type SlabFacts } from "../report-cache";
import { riskBandSlabsSql } from "../risk/bands";

/** Under this many affected slabs a report warns that its tests have little power (the screens read it too). */
export { SMALL_AFFECTED } from "@shared/api/reports";

export function variableSpec(key: string): VariableSpec {
  const v = VARIABLES.find((x) => x.key === key);
  if (!v) throw badRequest(said("reports.unknownVariable", { key }), { field: "variable" });
  return v;
}

export interface Scope {
  /** SQL conditions on slab_conditions c. */
  where: string[];
  params: Record<string, unknown>;
  /** The same slab filters, for the in-memory scan. */
  js: {
    from?: number;
    to?: number;
    caster?: Set<number>;
    strand?: Set<number>;
    grade?: Set<number>;
    family?: Set<number>;
    transition?: 0 | 1;
    riskSlabs?: Set<number>;
  };
  /** A CTE named aff(id): the slabs with at least one defect passing the defect filters. */
  aff: string;
  defectWhere: string[];
}

function idsFor(sqlite: Database.Database, table: string, codes: string[], label: string, field: string): number[] {
  const rows = sqlite
    .prepare(`select id, code from ${table} where upper(code) in (${codes.map(() => "?").join(",")})`)
    .all(...codes.map((c) => c.toUpperCase())) as { id: number; code: string }[];
  const found = new Set(rows.map((r) => r.code.toUpperCase()));
  const missing = codes.filter((c) => !found.has(c.toUpperCase()));
  if (missing.length) throw badRequest(said(`reports.unknown.${field}`, { codes: missing.join(", ") }), { field });
  return rows.map((r) => r.id);
}

const inList = (ids: number[]) => `(${ids.map((n) => Math.trunc(n)).join(",")})`;

export function buildScope(db: Db, f: ReportFilters, opts: { skipDates?: boolean } = {}): Scope {
  const sqlite = db.$client;
  const where: string[] = [];
  const params: Record<string, unknown> = {};
  const js: Scope["js"] = {};
  if (!opts.skipDates) {
    const from = parseDateBound(f.from, false, "from");
    const to = parseDateBound(f.to, true, "to");
    if (from !== undefined) {
      where.push("c.cast_at >= @from");
      params.from = from;
      js.from = from;
    }
    if (to !== undefined) {
      where.push("c.cast_at <= @to");
      params.to = to;
      js.to = to;
    }
  }
  const setOf = (key: "caster" | "strand" | "grade" | "family", col: string, ids: number[]) => {
    js[key] = new Set(ids);
    where.push(ids.length ? `c.${col} in ${inList(ids)}` : "0");
  };
  if (f.caster) setOf("caster", "caster_id", idsFor(sqlite, "casters", [f.caster], "caster", "caster"));
  if (f.strand !== undefined) setOf("strand", "strand_id", sqlite.prepare("select id from strands where strand_no = ?").pluck().all(f.strand) as number[]);
  if (f.grade.length) setOf("grade", "grade_id", idsFor(sqlite, "grades", f.grade, "grade", "grade"));
  if (f.family.length) setOf("family", "family_id", idsFor(sqlite, "grade_families", f.family, "grade family", "family"));
  if (f.transition) {
    js.transition = f.transition === "yes" ? 1 : 0;
    where.push(`c.transition = ${js.transition}`);
  }

  const defectWhere = ["d.deleted_at is null", "d.review_status <> 'rejected'"];
  // The defect types the defect filters leave (both filters must hold), for the risk band's models.
  let typeIds: number[] | null = null;
  if (f.defectType.length) {
    typeIds = idsFor(sqlite, "defect_types", f.defectType, "defect type", "defectType");
    defectWhere.push(`d.type_id in ${inList(typeIds)}`);
  }
  if (f.category.length) {
    const cats = idsFor(sqlite, "defect_categories", f.category, "defect category", "category");
    defectWhere.push(`d.type_id in (select id from defect_types where category_id in ${inList(cats)})`);
    const inCats = new Set(
      sqlite
        .prepare(`select id from defect_types where category_id in ${inList(cats)}`)
        .pluck()
        .all() as number[],
    );
    typeIds = typeIds ? typeIds.filter((id) => inCats.has(id)) : [...inCats];
  }
  if (f.riskBand?.length) {
    // The slabs in the chosen risk bands (risk/bands.ts): one set for the in-memory scan and the same query for SQL.
    const sql = riskBandSlabsSql(sqlite, f.riskBand, typeIds);
    js.riskSlabs = new Set(sqlite.prepare(sql).pluck().all() as number[]);
    where.push(`c.slab_id in (${sql})`);
  }
  if (f.stage) {
    defectWhere.push("d.stage = @stage");
    params.stage = f.stage;
  }
  if (f.minSeverity) {
    defectWhere.push("d.severity >= @minSeverity");
    params.minSeverity = f.minSeverity;
  }
  if (f.cause) {
    const tag = idsFor(sqlite, "cause_tags", [f.cause], "cause tag", "cause")[0]!;
    defectWhere.push(`d.id in (select defect_id from defect_causes where tag_id = ${tag} and removed_at is null)`);
  }
  return {
    where,
    params,
    js,
    defectWhere,
    aff: `aff(id) as (select d.slab_id from defects d where ${defectWhere.join(" and ")} group by d.slab_id)`,
  };
}

export const whereSql = (s: Scope, extra: string[] = []) => {
  const all = [...s.where, ...extra];
  return all.length ? `where ${all.join(" and ")}` : "";
};

/** Row indexes of the slab facts within the scope, and which of them are affected (on shared memory in a screening's helpers). */
export interface Scanned {
  facts: SlabFacts;
  rows: Int32Array;
  /** 1 for an affected slab, by row index of the facts. */
  affected: Uint8Array;
}

/**
 * The slabs in scope and which of them are affected. `reuse`: the arrays are a scratch slot's
 * (stats/scratch.ts), valid until the next scan with the same name (a screening's: it holds its
 * scan only while it runs, and its helper threads read the same memory instead of each screening
 * leaving 25 MB at five million slabs for the collector, pinned meanwhile by a helper's copy).
 */
export function scan(db: Db, scope: Scope, extra?: { from?: number; to?: number; reuse?: string }): Scanned {
  const f = slabFacts(db);
  const j = scope.js;
  const from = extra?.from ?? j.from;
  const to = extra?.to ?? j.to;
  // On shared memory, so a screening's helper threads read them too (screening-threads.ts).
  const rows = extra?.reuse ? scratch(`${extra.reuse}.rows`, Int32Array, f.size, undefined, true) : new Int32Array(new SharedArrayBuffer(f.size * 4));
  let inBand: Uint8Array | null = null;
  if (j.riskSlabs) {
    inBand = new Uint8Array(f.size);
    for (const id of j.riskSlabs) {
      const at = id < f.indexOf.length ? f.indexOf[id]! : -1;
      if (at >= 0) inBand[at] = 1;
    }
  }
  let n = 0;
  for (let i = 0; i < f.size; i++) {
    if (inBand && !inBand[i]) continue;
    if (from !== undefined && !(f.castAt[i]! >= from)) continue;
    if (to !== undefined && !(f.castAt[i]! <= to)) continue;
    if (j.caster && !j.caster.has(f.casterId[i]!)) continue;
    if (j.strand && !j.strand.has(f.strandId[i]!)) continue;
    if (j.grade && !j.grade.has(f.gradeId[i]!)) continue;
    if (j.family && !j.family.has(f.familyId[i]!)) continue;
    if (j.transition !== undefined && f.transition[i] !== j.transition) continue;
    rows[n++] = i;
  }
  const affected = extra?.reuse ? scratch(`${extra.reuse}.affected`, Uint8Array, f.size, 0, true) : new Uint8Array(new SharedArrayBuffer(f.size));
  // Every matching defect's slab, duplicates and all (a flag set twice is the same flag): without a
  // GROUP BY SQLite may read the table straight through instead of walking the slab index.
  const ids = db.$client
    .prepare(`select d.slab_id from defects d where ${scope.defectWhere.join(" and ")}`)
    .pluck()
    .all(scope.params) as number[];
  for (const id of ids) {
    const at = id < f.indexOf.length ? f.indexOf[id]! : -1;
    if (at >= 0) affected[at] = 1;
  }
  return { facts: f, rows: rows.subarray(0, n), affected };
}

/** (value, slabs, affected) groups of one variable, values rounded to the grouping resolution. */
export function variableGroups(s: Scanned, key: string): { groups: Group[]; missing: number } {
  const scale = 10 ** (variableSpec(key).digits + 1);
  const map = new Map<number, Group>();
  let missing = 0;
  // The slabs in scope come in order: each piece of the column is walked once.
  let u = 0;
  eachPiece(s.facts, variableSpec(key).key, (col, from, to) => {
    for (; u < s.rows.length; u++) {
      const i = s.rows[u]!;
      if (i >= to) break;
      const raw = col[i - from]!;
      if (Number.isNaN(raw)) {
        missing++;
        continue;
      }
      const v = Math.round(raw * scale) / scale;
      let g = map.get(v);
      if (!g) map.set(v, (g = { value: v, n: 0, affected: 0 }));
      g.n++;
      g.affected += s.affected[i]!;
    }
  });
  return { groups: normalizeGroups([...map.values()]), missing };
}

export const finite = (x: number) => (Number.isFinite(x) ? x : null);

export function proportion(slabs: number, affected: number) {
  const w = wilson(affected, slabs);
  return { slabs, affected, rate: finite(w.p), ciLower: finite(w.lower), ciUpper: finite(w.upper) };
}
