/**
 * The slabs a risk model learns from and is scored on, read straight from SQLite (slab_conditions,
 * defects, products) — not from the reports' in-memory cache, so training can run in a thread of its
 * own with its own connection.
 *
 * Outcome: the slab carries at least one live, unrejected entry of the target defect type (or of a
 * type in the target category). Whether the outcome is known: the slab was cast more than
 * JUDGED_AFTER_DAYS before the training — by then it has passed the yard. The product records no
 * "inspected, nothing found", so a recent slab is not yet judged and is left out of training and
 * validation (it is what gets scored) whatever has happened to it since: keeping the recent slabs
 * with an entry would fill the newest months (the test part) with defective slabs, and keeping the
 * recent rolled ones would empty them of defective slabs (a slab held for a defect is not rolled).
 * The rule looks only at time, never at the outcome. The reports count every slab in their rates; the
 * difference is only the last fortnight.
 */
import type Database from "better-sqlite3";
import { CATEGORICAL_LABELS, VARIABLES } from "@shared/variables";
import { SEQUENCE_LEVELS, seqBucket } from "../reports/adjusted";
import type { CategoricalInput, NumericInput, RiskData } from "./model";

export const RISK_CATEGORIES = ["grade_family", "strand", "transition", "sequence_position"] as const;
export type RiskCategory = (typeof RISK_CATEGORIES)[number];

/** Below these a model has too little to learn from or to be judged on (training is refused in words). */
export const MIN_JUDGED_SLABS = 200;
export const MIN_AFFECTED_SLABS = 20;

/** A slab cast this long before the training has passed the yard: no entry means none was found. */
export const JUDGED_AFTER_DAYS = 14;

export interface RiskSpec {
  targetKind: "type" | "category";
  targetCode: string;
  /** Numeric conditions (keys of the variables catalogue). */
  conditions: string[];
  categories: RiskCategory[];
  knots: 3 | 4 | 5;
  /** Training window by cast time, epoch ms. */
  from?: number;
  to?: number;
}

/** The defect type ids a target covers; empty when the code is unknown. */
export function targetTypeIds(sqlite: Database.Database, spec: Pick<RiskSpec, "targetKind" | "targetCode">): number[] {
  return spec.targetKind === "type"
    ? (sqlite.prepare("select id from defect_types where upper(code) = upper(?)").pluck().all(spec.targetCode) as number[])
    : (sqlite
        .prepare("select t.id from defect_types t join defect_categories c on c.id = t.category_id where upper(c.code) = upper(?)")
        .pluck()
        .all(spec.targetCode) as number[]);
}

const sequenceCode = (pos: number | null) => SEQUENCE_LEVELS.indexOf(seqBucket(pos ?? 0) as (typeof SEQUENCE_LEVELS)[number]);

/** Words for the codes of each category, from the database. */
export function categoryNames(sqlite: Database.Database): Record<RiskCategory, (code: number) => string> {
  const families = new Map(sqlite.prepare("select id, code from grade_families").raw().all() as [number, string][]);
  const strands = new Map(
    sqlite.prepare("select s.id, c.code || ' strand ' || s.strand_no from strands s join casters c on c.id = s.caster_id").raw().all() as [number, string][],
  );
  return {
    grade_family: (c) => families.get(c) ?? "unknown",
    strand: (c) => strands.get(c) ?? "unknown",
    transition: (c) => (c ? "transition" : "not transition"),
    sequence_position: (c) => SEQUENCE_LEVELS[c] ?? "unknown",
  };
}

const CATEGORY_COLUMN: Record<RiskCategory, string> = {
  grade_family: "coalesce(c.family_id, 0)",
  strand: "c.strand_id",
  transition: "c.transition",
  sequence_position: "c.sequence_position",
};

/** Reads every judged slab in the window with its conditions and outcome. */
export function readTrainingData(
  sqlite: Database.Database,
  spec: RiskSpec,
  asOf = Date.now(),
): RiskData & { slabIds: Int32Array; outcome: Uint8Array; castAt: Float64Array; known: number; unjudged: number } {
  const typeIds = targetTypeIds(sqlite, spec);
  const conds = spec.conditions.map((k) => VARIABLES.find((v) => v.key === k)!);
  const where = ["c.cast_at is not null"];
  const params: Record<string, number> = { judgedBefore: asOf - JUDGED_AFTER_DAYS * 86_400_000 };
  if (spec.from !== undefined) {
    where.push("c.cast_at >= @from");
    params.from = spec.from;
  }
  if (spec.to !== undefined) {
    where.push("c.cast_at <= @to");
    params.to = spec.to;
  }
  const ids = typeIds.length ? typeIds.join(",") : "-1";
  const sql = `
    select c.slab_id, c.cast_at, coalesce(c.family_id, 0), ${spec.categories.map((k) => CATEGORY_COLUMN[k]).join(", ")}${spec.categories.length ? "," : ""}
      ${conds.map((v) => `c.${v.key}`).join(", ")}${conds.length ? "," : ""}
      exists (select 1 from defects d where d.slab_id = c.slab_id and d.deleted_at is null and d.review_status <> 'rejected' and d.type_id in (${ids})) as affected,
      (c.cast_at <= @judgedBefore) as judged
    from slab_conditions c where ${where.join(" and ")} order by c.cast_at, c.slab_id`;
  // Read row by row into growing typed columns: a million slabs as JS arrays would cost ~0.5 GB.
  const nc = spec.categories.length;
  let cap = 65_536;
  let slabIds = new Int32Array(cap);
  let castAt = new Float64Array(cap);
  let family = new Int32Array(cap);
  let outcome = new Uint8Array(cap);
  let catCodes = spec.categories.map(() => new Int32Array(cap));
  let numValues = conds.map(() => new Float64Array(cap));
  const grow = <T extends Int32Array | Float64Array | Uint8Array>(a: T): T => {
    const b = new (a.constructor as new (n: number) => T)(cap);
    b.set(a);
    return b;
  };
  let n = 0;
  let unjudged = 0;
  for (const r of sqlite.prepare(sql).raw().iterate(params) as IterableIterator<(number | null)[]>) {
    if (r[r.length - 1] !== 1) {
      unjudged++;
      continue;
    }
    if (n === cap) {
      cap = Math.ceil(cap * 1.5);
      slabIds = grow(slabIds);
      castAt = grow(castAt);
      family = grow(family);
      outcome = grow(outcome);
      catCodes = catCodes.map(grow);
      numValues = numValues.map(grow);
    }
    slabIds[n] = r[0]!;
    castAt[n] = r[1]!;
    family[n] = r[2]!;
    for (let j = 0; j < nc; j++) {
      const v = r[3 + j] ?? null;
      catCodes[j]![n] = spec.categories[j] === "sequence_position" ? sequenceCode(v) : (v ?? -1);
    }
    for (let j = 0; j < conds.length; j++) {
      const v = r[3 + nc + j];
      numValues[j]![n] = v === null || v === undefined ? NaN : v;
    }
    outcome[n] = r[3 + nc + conds.length] ? 1 : 0;
    n++;
  }
  slabIds = slabIds.slice(0, n);
  castAt = castAt.slice(0, n);
  family = family.slice(0, n);
  outcome = outcome.slice(0, n);
  catCodes = catCodes.map((a) => a.slice(0, n));
  numValues = numValues.map((a) => a.slice(0, n));
  const names = categoryNames(sqlite);
  const numeric: NumericInput[] = conds.map((v, j) => ({ key: v.key, label: v.label, unit: v.unit === "–" ? null : v.unit, values: numValues[j]! }));
  const categorical: CategoricalInput[] = spec.categories.map((k, j) => ({ key: k, label: CATEGORICAL_LABELS[k], codes: catCodes[j]!, name: names[k] }));
  return {
    rows: Int32Array.from({ length: n }, (_, i) => i),
    castAt,
    outcome,
    numeric,
    categorical,
    family,
    slabIds,
    known: n,
    unjudged,
  };
}

/** The values a stored model needs for the given slabs, in its terms' order (null where missing). */
export function slabInputs(
  sqlite: Database.Database,
  numericKeys: string[],
  categoryKeys: RiskCategory[],
  slabIds: number[],
): Map<number, { numeric: (number | null)[]; categorical: (number | null)[] }> {
  const out = new Map<number, { numeric: (number | null)[]; categorical: (number | null)[] }>();
  for (const k of numericKeys) if (!VARIABLES.some((v) => v.key === k)) throw new Error(`Unknown condition ${k}`);
  const cols = [...categoryKeys.map((k) => CATEGORY_COLUMN[k]), ...numericKeys.map((k) => `c.${k}`)];
  // One statement for every chunk: the ids travel as one JSON array.
  const read = sqlite
    .prepare(`select c.slab_id${cols.length ? ", " : ""}${cols.join(", ")} from json_each(?) j cross join slab_conditions c on c.slab_id = j.value`)
    .raw();
  const nc = categoryKeys.length;
  const seq = categoryKeys.indexOf("sequence_position");
  for (let i = 0; i < slabIds.length; i += 5000) {
    const rows = read.all(JSON.stringify(slabIds.slice(i, i + 5000))) as (number | null)[][];
    for (const r of rows) {
      const categorical = r.slice(1, 1 + nc);
      if (seq >= 0) categorical[seq] = sequenceCode(categorical[seq] ?? null);
      out.set(r[0]!, { numeric: r.slice(1 + nc), categorical });
    }
  }
  return out;
}
