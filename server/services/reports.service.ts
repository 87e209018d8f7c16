/**
 * The quality engineer's reports. The slab is the unit. Every report scans the slab facts (the typed
 * column cache of slab_conditions, report-cache.ts) within the filters and decides "affected" from
 * the defects that pass the defect filters (one indexed SQL query); the statistics run on the
 * resulting groups (server/stats). A continuous variable is grouped at a resolution ten times finer than it is shown
 * (e.g. casting speed to 0.001 m/min); ranks and fits treat equal grouped values as ties.
 */
import type Database from "better-sqlite3";
import type { z } from "zod";
import type {
  BeforeAfter,
  ControlChart,
  Overview,
  ProcessWindow,
  RateByVariable,
  ReportFilters,
  Screening,
  SlabPositions,
  beforeAfterQuerySchema,
  controlChartQuerySchema,
  overviewQuerySchema,
  processWindowQuerySchema,
  rateByVariableQuerySchema,
  screeningQuerySchema,
  slabPositionsQuerySchema,
} from "@shared/api/reports";
import { FACES } from "@shared/domain";
import { VARIABLES, type VariableSpec } from "@shared/variables";
import type { Db } from "../db/client";
import { badRequest } from "../lib/http-error";
import { binnedRates, equalWidthEdges, quantileEdges } from "../stats/binning";
import { chiSquareIndependence, fisherExact2x2 } from "../stats/contingency";
import { pChart } from "../stats/control";
import { logisticRegression } from "../stats/logistic";
import { mannWhitneyGrouped } from "../stats/mann-whitney";
import { benjaminiHochberg } from "../stats/multiple";
import { differenceOfProportions, ratePer, wilson } from "../stats/proportions";
import { normalizeGroups, type Group } from "../stats/ranks";
import { welchTTest } from "../stats/regression";
import { correlationsWithOutcome } from "../stats/spearman";
import { parseDateBound } from "./heats.service";
import { slabFacts } from "./report-cache";

const SMALL_AFFECTED = 10;

export function variableSpec(key: string): VariableSpec {
  const v = VARIABLES.find((x) => x.key === key);
  if (!v) throw badRequest(`Unknown variable ${key}.`, { field: "variable" });
  return v;
}


interface Scope {
  /** SQL conditions on slab_conditions c. */
  where: string[];
  params: Record<string, unknown>;
  /** The same slab filters, for the in-memory scan. */
  js: { from?: number; to?: number; caster?: Set<number>; strand?: Set<number>; grade?: Set<number>; family?: Set<number>; transition?: 0 | 1 };
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
  if (missing.length) throw badRequest(`Unknown ${label}: ${missing.join(", ")}.`, { field });
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
  if (f.defectType.length) defectWhere.push(`d.type_id in ${inList(idsFor(sqlite, "defect_types", f.defectType, "defect type", "defectType"))}`);
  if (f.category.length) {
    const cats = idsFor(sqlite, "defect_categories", f.category, "defect category", "category");
    defectWhere.push(`d.type_id in (select id from defect_types where category_id in ${inList(cats)})`);
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

const whereSql = (s: Scope, extra: string[] = []) => {
  const all = [...s.where, ...extra];
  return all.length ? `where ${all.join(" and ")}` : "";
};

/** Row indexes of the slab facts within the scope, and which of them are affected. */
function scan(db: Db, scope: Scope, extra?: { from?: number; to?: number }) {
  const f = slabFacts(db);
  const j = scope.js;
  const from = extra?.from ?? j.from;
  const to = extra?.to ?? j.to;
  const rows = new Int32Array(f.size);
  let n = 0;
  for (let i = 0; i < f.size; i++) {
    if (from !== undefined && !(f.castAt[i]! >= from)) continue;
    if (to !== undefined && !(f.castAt[i]! <= to)) continue;
    if (j.caster && !j.caster.has(f.casterId[i]!)) continue;
    if (j.strand && !j.strand.has(f.strandId[i]!)) continue;
    if (j.grade && !j.grade.has(f.gradeId[i]!)) continue;
    if (j.family && !j.family.has(f.familyId[i]!)) continue;
    if (j.transition !== undefined && f.transition[i] !== j.transition) continue;
    rows[n++] = i;
  }
  const affected = new Uint8Array(f.size);
  const ids = db.$client.prepare(`select d.slab_id from defects d where ${scope.defectWhere.join(" and ")} group by d.slab_id`).pluck().all(scope.params) as number[];
  for (const id of ids) {
    const at = id < f.indexOf.length ? f.indexOf[id]! : -1;
    if (at >= 0) affected[at] = 1;
  }
  return { facts: f, rows: rows.subarray(0, n), affected };
}

type Scanned = ReturnType<typeof scan>;

/** (value, slabs, affected) groups of one variable, values rounded to the grouping resolution. */
function variableGroups(s: Scanned, key: string): { groups: Group[]; missing: number } {
  const col = s.facts.vars[variableSpec(key).key]!;
  const scale = 10 ** (variableSpec(key).digits + 1);
  const map = new Map<number, Group>();
  let missing = 0;
  for (const i of s.rows) {
    const raw = col[i]!;
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
  return { groups: normalizeGroups([...map.values()]), missing };
}

function quantilesOf(groups: Group[], pick: (g: Group) => number) {
  const n = groups.reduce((s, g) => s + pick(g), 0);
  if (n === 0) return { n: 0, min: null, q1: null, median: null, q3: null, max: null, mean: null };
  const at = (q: number) => {
    // Type 7 quantile (R's default) on the grouped observations.
    const h = (n - 1) * q;
    const lo = Math.floor(h);
    const valueAt = (i: number) => {
      let cum = 0;
      for (const g of groups) {
        cum += pick(g);
        if (i < cum) return g.value;
      }
      return groups[groups.length - 1]!.value;
    };
    const a = valueAt(lo);
    const b = valueAt(Math.min(n - 1, lo + 1));
    return a + (h - lo) * (b - a);
  };
  let sum = 0;
  for (const g of groups) sum += g.value * pick(g);
  const present = groups.filter((g) => pick(g) > 0);
  return { n, min: present[0]!.value, q1: at(0.25), median: at(0.5), q3: at(0.75), max: present[present.length - 1]!.value, mean: sum / n };
}

/** Up to k values taken evenly through a group's distribution (for a strip plot). */
function stripOf(groups: Group[], pick: (g: Group) => number, k = 300): number[] {
  const n = groups.reduce((s, g) => s + pick(g), 0);
  if (n === 0) return [];
  const take = Math.min(k, n);
  const out: number[] = [];
  let cum = 0;
  let gi = 0;
  for (let i = 0; i < take; i++) {
    const target = Math.floor(((i + 0.5) * n) / take);
    while (gi < groups.length && cum + pick(groups[gi]!) <= target) {
      cum += pick(groups[gi]!);
      gi++;
    }
    out.push(groups[Math.min(gi, groups.length - 1)]!.value);
  }
  return out;
}

const finite = (x: number) => (Number.isFinite(x) ? x : null);

export function rateByVariable(db: Db, q: z.output<typeof rateByVariableQuerySchema>): RateByVariable {
  const spec = variableSpec(q.variable);
  const { groups, missing } = variableGroups(scan(db, buildScope(db, q)), q.variable);
  const slabs = groups.reduce((s, g) => s + g.n, 0);
  const affected = groups.reduce((s, g) => s + g.affected, 0);
  const edges = q.binning === "quantile" ? quantileEdges(groups, q.bins) : equalWidthEdges(groups, q.bins);
  const bins = binnedRates(groups, edges, q.minN);
  const { spearman: sp, pointBiserial: pb } = correlationsWithOutcome(groups);
  const fit = logisticRegression(groups.map((g) => ({ x: [g.value], successes: g.affected, trials: g.n })));
  const mw = mannWhitneyGrouped(groups);
  const notes: string[] = [];
  if (slabs === 0) notes.push("No slab in these filters has a value for this variable.");
  else if (affected < SMALL_AFFECTED) notes.push(`Only ${affected} affected slab${affected === 1 ? "" : "s"}: the tests have little power and the intervals are wide.`);
  if (bins.some((b) => b.slabs < q.minN)) notes.push(`Some bins hold fewer than ${q.minN} slabs.`);
  if (missing > 0) notes.push(`${missing} slab${missing === 1 ? "" : "s"} in the filters have no value for ${spec.label.toLowerCase()} and are left out.`);
  return {
    variable: { key: spec.key, label: spec.label, unit: spec.unit },
    slabs,
    affected,
    slabsWithoutValue: missing,
    bins,
    spearman: { rho: finite(sp.rho), p: finite(sp.p) },
    pointBiserial: { r: finite(pb.rho), p: finite(pb.p) },
    logistic: {
      intercept: finite(fit.coefficients[0]!),
      slope: finite(fit.coefficients[1]!),
      oddsRatio: finite(fit.oddsRatios[0]?.value ?? NaN),
      oddsRatioCiLower: finite(fit.oddsRatios[0]?.lower ?? NaN),
      oddsRatioCiUpper: finite(fit.oddsRatios[0]?.upper ?? NaN),
      p: finite(fit.p[1] ?? NaN),
      converged: fit.converged,
    },
    mannWhitney: { u: finite(mw.u), p: finite(mw.p) },
    distribution: { affected: quantilesOf(groups, (g) => g.affected), sound: quantilesOf(groups, (g) => g.n - g.affected) },
    strip: { affected: stripOf(groups, (g) => g.affected), sound: stripOf(groups, (g) => g.n - g.affected) },
    methods: {
      bins: `${q.binning === "quantile" ? "Quantile" : "Equal-width"} bins; bins under ${q.minN} slabs merged with a neighbour; Wilson 95 % intervals`,
      spearman: sp.method,
      pointBiserial: pb.method,
      logistic: `${fit.method}; odds ratio per ${spec.unit === "–" ? "unit" : "1 " + spec.unit}`,
      mannWhitney: `${mw.method} (U of the affected slabs)`,
      grouping: `values grouped to ${spec.digits + 1} decimals; equal grouped values are ties`,
    },
    notes,
  };
}

const seqBucket = (pos: number) => (pos <= 0 ? "unknown" : pos === 1 ? "1st heat" : pos <= 3 ? "2nd–3rd heat" : "4th heat on");

export function screening(db: Db, q: z.output<typeof screeningQuerySchema>): Screening {
  const sc = scan(db, buildScope(db, q));
  const { facts: f, rows, affected: aff } = sc;
  const vars = VARIABLES;
  // One pass over the slabs in the filters: per variable and outcome, n, Σx and Σx².
  const acc = vars.map(() => new Float64Array(6)); // n0, s0, ss0, n1, s1, ss1
  const cols = vars.map((v) => f.vars[v.key]!);
  for (const i of rows) {
    const o = aff[i]! * 3;
    for (let k = 0; k < cols.length; k++) {
      const x = cols[k]![i]!;
      if (x === x) {
        const a = acc[k]!;
        a[o]! += 1;
        a[o + 1]! += x;
        a[o + 2]! += x * x;
      }
    }
  }
  const slabs = rows.length;
  let affected = 0;
  for (const i of rows) affected += aff[i]!;
  const out: Screening["variables"] = [];
  vars.forEach((v, k) => {
    const a = acc[k]!;
    const stat = (n: number, sum: number, ss: number) => {
      const mean = sum / n;
      return { n, mean, variance: n > 1 ? Math.max(0, (ss - n * mean * mean) / (n - 1)) : NaN };
    };
    const sound = stat(a[0]!, a[1]!, a[2]!);
    const hit = stat(a[3]!, a[4]!, a[5]!);
    const method = "Welch two-sample t test on the means, two-sided";
    if (hit.n < 2 || sound.n < 2) {
      out.push({ key: v.key, label: v.label, kind: "numeric", n: hit.n + sound.n, statistic: null, df: null, p: null, pAdjusted: null, effect: null, meanAffected: hit.n ? hit.mean : null, meanSound: sound.n ? sound.mean : null, method, fewSlabs: true });
      return;
    }
    const t = hit.variance > 0 || sound.variance > 0 ? welchTTest(hit, sound) : { t: NaN, df: NaN, p: NaN };
    out.push({
      key: v.key, label: v.label, kind: "numeric", n: hit.n + sound.n, statistic: finite(t.t), df: finite(t.df), p: finite(t.p), pAdjusted: null,
      effect: hit.mean - sound.mean, meanAffected: hit.mean, meanSound: sound.mean, method, fewSlabs: hit.n < SMALL_AFFECTED || sound.n < SMALL_AFFECTED,
    });
  });
  const strandLabels = new Map(
    (db.$client.prepare("select s.id, c.code, s.strand_no from strands s join casters c on c.id = s.caster_id").all() as { id: number; code: string; strand_no: number }[]).map((x) => [x.id, `${x.code} strand ${x.strand_no}`]),
  );
  const familyLabels = new Map((db.$client.prepare("select id, code from grade_families").all() as { id: number; code: string }[]).map((x) => [x.id, x.code]));
  const categorical: [string, string, (i: number) => string][] = [
    ["strand", "Strand", (i) => strandLabels.get(f.strandId[i]!) ?? String(f.strandId[i])],
    ["grade_family", "Grade family", (i) => familyLabels.get(f.familyId[i]!) ?? String(f.familyId[i])],
    ["transition", "Transition slab", (i) => (f.transition[i] ? "transition" : "not transition")],
    ["sequence_position", "Position in sequence", (i) => seqBucket(f.sequencePosition[i]!)],
  ];
  for (const [key, label, of] of categorical) {
    const byCat = new Map<string, { slabs: number; affected: number }>();
    for (const i of rows) {
      const k = of(i);
      let c = byCat.get(k);
      if (!c) byCat.set(k, (c = { slabs: 0, affected: 0 }));
      c.slabs++;
      c.affected += aff[i]!;
    }
    const cats = [...byCat.entries()].sort(([x], [y]) => x.localeCompare(y));
    const chi = cats.length > 1 ? chiSquareIndependence(cats.map(([, c]) => [c.affected, c.slabs - c.affected])) : null;
    out.push({
      key, label, kind: "categorical", n: slabs, statistic: chi ? finite(chi.statistic) : null, df: chi?.df ?? null, p: chi ? finite(chi.p) : null,
      pAdjusted: null, effect: null, meanAffected: null, meanSound: null,
      categories: cats.map(([l, c]) => ({ label: l, slabs: c.slabs, affected: c.affected, rate: c.slabs ? c.affected / c.slabs : null })),
      method: chi ? chi.method : "only one category in these filters", fewSlabs: !chi || chi.smallExpected > 0 || affected < SMALL_AFFECTED,
    });
  }
  const tested = out.filter((v) => v.p != null);
  const adjusted = benjaminiHochberg(tested.map((v) => v.p!));
  tested.forEach((v, i) => (v.pAdjusted = adjusted[i]!));
  out.sort((x, y) => (x.pAdjusted ?? 2) - (y.pAdjusted ?? 2) || (x.p ?? 2) - (y.p ?? 2));
  const notes = [
    "p-values adjusted for the number of variables screened (Benjamini–Hochberg false discovery rate).",
    "Screening shows association, not cause: grade mix and shared conditions confound almost everything. Open a variable in the rate-against-variable report before drawing a conclusion.",
  ];
  if (affected < SMALL_AFFECTED) notes.push(`Only ${affected} affected slabs in these filters.`);
  return { slabs, affected, variables: out, notes };
}

const DAY = 86_400_000;
/** Period label of a time: the UTC day, the ISO week (2026-W48) or the month. */
export function periodOf(ms: number, period: "day" | "week" | "month"): string {
  const d = new Date(ms);
  if (period === "day") return d.toISOString().slice(0, 10);
  if (period === "month") return d.toISOString().slice(0, 7);
  // ISO 8601 week: the week with the year's first Thursday is week 1.
  const day = (d.getUTCDay() + 6) % 7;
  const thursday = new Date(Date.UTC(d.getUTCFullYear(), d.getUTCMonth(), d.getUTCDate() - day + 3));
  const firstThursday = new Date(Date.UTC(thursday.getUTCFullYear(), 0, 4));
  const week = 1 + Math.round((thursday.getTime() - firstThursday.getTime()) / DAY / 7 - ((firstThursday.getUTCDay() + 6) % 7 - 3) / 7);
  return `${thursday.getUTCFullYear()}-W${String(week).padStart(2, "0")}`;
}

/** Counts per period label, in label order; labels are memoised per UTC day. */
function byPeriod(s: Scanned, period: "day" | "week" | "month", weight = false) {
  const labelOfDay = new Map<number, string>();
  const map = new Map<string, { n: number; x: number; t: number }>();
  for (const i of s.rows) {
    const at = s.facts.castAt[i]!;
    if (at !== at) continue;
    const dayNo = Math.floor(at / DAY);
    let label = labelOfDay.get(dayNo);
    if (!label) labelOfDay.set(dayNo, (label = periodOf(dayNo * DAY, period)));
    let c = map.get(label);
    if (!c) map.set(label, (c = { n: 0, x: 0, t: 0 }));
    c.n++;
    c.x += s.affected[i]!;
    if (weight) c.t += s.facts.weightT[i]! || 0;
  }
  return [...map.entries()].sort(([a], [b]) => a.localeCompare(b)).map(([label, c]) => ({ period: label, ...c }));
}

export function controlChart(db: Db, q: z.output<typeof controlChartQuerySchema>): ControlChart {
  const rows = byPeriod(scan(db, buildScope(db, q)), q.period);
  const chart = pChart(rows);
  return {
    period: q.period,
    slabs: rows.reduce((s, r) => s + r.n, 0),
    affected: rows.reduce((s, r) => s + r.x, 0),
    pBar: finite(chart.pBar),
    points: chart.points,
    method: "p-chart, 3σ limits for each period's own number of slabs (p̄ ± 3√(p̄(1 − p̄)/n)); lower limit held at 0",
  };
}

function proportion(slabs: number, affected: number) {
  const w = wilson(affected, slabs);
  return { slabs, affected, rate: finite(w.p), ciLower: finite(w.lower), ciUpper: finite(w.upper) };
}

export function overview(db: Db, q: z.output<typeof overviewQuerySchema>): Overview {
  const scope = buildScope(db, q);
  const sc = scan(db, scope);
  const f = sc.facts;
  const inScope = new Uint8Array(f.size);
  for (const i of sc.rows) inScope[i] = 1;
  const slabRows = byPeriod(sc, q.period, true);
  // The defects passing the defect filters, on slabs within the slab filters.
  const defects = db.$client.prepare(`select d.slab_id, d.type_id from defects d where ${scope.defectWhere.join(" and ")}`).raw().all(scope.params) as [number, number][];
  const defectsBy = new Map<string, number>();
  const byType = new Map<number, { defects: number; slabs: Set<number> }>();
  for (const [slabId, typeId] of defects) {
    const i = slabId < f.indexOf.length ? f.indexOf[slabId]! : -1;
    if (i < 0 || !inScope[i]) continue;
    const at = f.castAt[i]!;
    if (at === at) {
      const label = periodOf(at, q.period);
      defectsBy.set(label, (defectsBy.get(label) ?? 0) + 1);
    }
    let t = byType.get(typeId);
    if (!t) byType.set(typeId, (t = { defects: 0, slabs: new Set() }));
    t.defects++;
    t.slabs.add(slabId);
  }
  const row = (n: number, x: number, t: number, d: number) => ({ ...proportion(n, x), defects: d, tonnes: t, per100Slabs: finite(ratePer(d, n, 100)), per1000t: finite(ratePer(d, t, 1000)) });
  const periods = slabRows.map((r) => ({ period: r.period, ...row(r.n, r.x, r.t, defectsBy.get(r.period) ?? 0) }));
  const tot = slabRows.reduce((s, r) => ({ n: s.n + r.n, x: s.x + r.x, t: s.t + r.t }), { n: 0, x: 0, t: 0 });
  const totalDefects = [...defectsBy.values()].reduce((s, v) => s + v, 0);
  const types = new Map((db.$client.prepare("select id, code, name from defect_types").all() as { id: number; code: string; name: string }[]).map((t) => [t.id, t]));
  const paretoRows = [...byType.entries()]
    .map(([id, t]) => ({ code: types.get(id)!.code, name: types.get(id)!.name, defects: t.defects, slabs: t.slabs.size }))
    .sort((a, b) => b.defects - a.defects || a.code.localeCompare(b.code));
  const paretoTotal = paretoRows.reduce((s, r) => s + r.defects, 0);
  let cum = 0;
  const pareto = paretoRows.map((r) => {
    cum += r.defects;
    return { code: r.code, name: r.name, defects: r.defects, slabsAffected: r.slabs, share: r.defects / paretoTotal, cumulativeShare: cum / paretoTotal };
  });
  const countBy = (key: Int32Array) => {
    const m = new Map<number, { n: number; x: number }>();
    for (const i of sc.rows) {
      let c = m.get(key[i]!);
      if (!c) m.set(key[i]!, (c = { n: 0, x: 0 }));
      c.n++;
      c.x += sc.affected[i]!;
    }
    return m;
  };
  const gradeNames = new Map((db.$client.prepare("select g.id, g.code, f.code as family from grades g join grade_families f on f.id = g.family_id").all() as { id: number; code: string; family: string }[]).map((g) => [g.id, g]));
  const byGrade = [...countBy(f.gradeId).entries()]
    .map(([id, c]) => ({ grade: gradeNames.get(id)?.code ?? String(id), family: gradeNames.get(id)?.family ?? "", ...proportion(c.n, c.x) }))
    .sort((a, b) => a.grade.localeCompare(b.grade));
  const strandNames = new Map((db.$client.prepare("select s.id, s.strand_no, c.code from strands s join casters c on c.id = s.caster_id").all() as { id: number; strand_no: number; code: string }[]).map((x) => [x.id, x]));
  const byStrand = [...countBy(f.strandId).entries()]
    .map(([id, c]) => ({ caster: strandNames.get(id)?.code ?? "", strand: strandNames.get(id)?.strand_no ?? 0, ...proportion(c.n, c.x) }))
    .sort((a, b) => a.caster.localeCompare(b.caster) || a.strand - b.strand);
  return { period: q.period, totals: row(tot.n, tot.x, tot.t, totalDefects), periods, pareto, byGrade, byStrand };
}

export function processWindow(db: Db, q: z.output<typeof processWindowQuerySchema>): ProcessWindow {
  if (q.x === q.y) throw badRequest("Choose two different variables for the process window.", { field: "y" });
  const sc = scan(db, buildScope(db, q));
  const sx = variableSpec(q.x);
  const sy = variableSpec(q.y);
  const edgesOf = (key: string, k: number) => {
    const { groups } = variableGroups(sc, key);
    return q.binning === "quantile" ? quantileEdges(groups, k) : equalWidthEdges(groups, k);
  };
  const ex = edgesOf(q.x, q.xBins);
  const ey = edgesOf(q.y, q.yBins);
  const bin = (v: number, edges: number[]) => {
    if (edges.length <= 2) return 0;
    let b = 0;
    while (b < edges.length - 2 && v >= edges[b + 1]!) b++;
    return b;
  };
  const nx = Math.max(1, ex.length - 1);
  const ny = Math.max(1, ey.length - 1);
  const n = new Int32Array(nx * ny);
  const x = new Int32Array(nx * ny);
  const cx = sc.facts.vars[sx.key]!;
  const cy = sc.facts.vars[sy.key]!;
  const scaleX = 10 ** (sx.digits + 1);
  const scaleY = 10 ** (sy.digits + 1);
  let slabs = 0;
  let affected = 0;
  for (const i of sc.rows) {
    const vx = cx[i]!;
    const vy = cy[i]!;
    if (vx !== vx || vy !== vy) continue;
    const c = bin(Math.round(vx * scaleX) / scaleX, ex) * ny + bin(Math.round(vy * scaleY) / scaleY, ey);
    n[c]!++;
    x[c]! += sc.affected[i]!;
    slabs++;
    affected += sc.affected[i]!;
  }
  const cells: ProcessWindow["cells"] = [];
  for (let xi = 0; xi < nx; xi++) {
    for (let yi = 0; yi < ny; yi++) {
      const c = xi * ny + yi;
      cells.push({
        xi, yi, xLower: ex[xi] ?? NaN, xUpper: ex[xi + 1] ?? ex[xi] ?? NaN, yLower: ey[yi] ?? NaN, yUpper: ey[yi + 1] ?? ey[yi] ?? NaN,
        ...proportion(n[c]!, x[c]!), sparse: n[c]! < q.minN,
      });
    }
  }
  return { x: { key: sx.key, label: sx.label, unit: sx.unit, edges: ex }, y: { key: sy.key, label: sy.label, unit: sy.unit, edges: ey }, minN: q.minN, slabs, affected, cells };
}

export function beforeAfter(db: Db, q: z.output<typeof beforeAfterQuerySchema>): BeforeAfter {
  const countIn = (sc: Scanned, keep?: (i: number) => boolean) => {
    let n = 0;
    let x = 0;
    for (const i of sc.rows) {
      if (keep && !keep(i)) continue;
      n++;
      x += sc.affected[i]!;
    }
    return { n, x };
  };
  let a: { n: number; x: number };
  let b: { n: number; x: number };
  let labels: [string, string];
  if (q.mode === "periods") {
    const need = (v: string | undefined, f: string) => {
      if (!v) throw badRequest(`Give ${f} (YYYY-MM-DD) for the period comparison.`, { field: f });
      return v;
    };
    const scope = buildScope(db, q, { skipDates: true });
    const aFrom = parseDateBound(need(q.aFrom, "aFrom"), false, "aFrom")!;
    const aTo = parseDateBound(need(q.aTo, "aTo"), true, "aTo")!;
    const bFrom = parseDateBound(need(q.bFrom, "bFrom"), false, "bFrom")!;
    const bTo = parseDateBound(need(q.bTo, "bTo"), true, "bTo")!;
    a = countIn(scan(db, scope, { from: aFrom, to: aTo }));
    b = countIn(scan(db, scope, { from: bFrom, to: bTo }));
    labels = [`${q.aFrom} – ${q.aTo}`, `${q.bFrom} – ${q.bTo}`];
  } else {
    if (!q.variable) throw badRequest("Give the variable whose two ranges are compared.", { field: "variable" });
    for (const f of ["aMin", "aMax", "bMin", "bMax"] as const) if (q[f] === undefined) throw badRequest(`Give ${f} for the range comparison.`, { field: f });
    const sc = scan(db, buildScope(db, q));
    const col = sc.facts.vars[variableSpec(q.variable).key]!;
    a = countIn(sc, (i) => col[i]! >= q.aMin! && col[i]! <= q.aMax!);
    b = countIn(sc, (i) => col[i]! >= q.bMin! && col[i]! <= q.bMax!);
    const s = variableSpec(q.variable);
    labels = [`${s.label} ${q.aMin}–${q.aMax} ${s.unit}`, `${s.label} ${q.bMin}–${q.bMax} ${s.unit}`];
  }
  const d = differenceOfProportions(b.x, b.n, a.x, a.n);
  const table: [[number, number], [number, number]] = [
    [a.x, a.n - a.x],
    [b.x, b.n - b.x],
  ];
  const chi = chiSquareIndependence(table);
  const useFisher = a.n === 0 || b.n === 0 || chi.smallExpected > 0 || Number.isNaN(chi.p);
  const test = useFisher
    ? { name: "fisher" as const, p: finite(fisherExact2x2(table).pTwoSided), method: "Fisher's exact test, two-sided (an expected count is below 5)" }
    : { name: "chi-square" as const, p: finite(chi.p), method: "Pearson chi-square test, 1 df, no continuity correction" };
  return {
    mode: q.mode,
    a: { label: labels[0], ...proportion(a.n, a.x) },
    b: { label: labels[1], ...proportion(b.n, b.x) },
    difference: { value: finite(d.difference), lower: finite(d.lower), upper: finite(d.upper), method: `rate of B minus rate of A; ${d.method}` },
    test,
  };
}

export function slabPositions(db: Db, q: z.output<typeof slabPositionsQuerySchema>): SlabPositions {
  const scope = buildScope(db, q);
  const rows = db.$client
    .prepare(
      `select d.face, d.position_along_mm / s.length_mm as fa,
         d.position_across_mm / (case when d.face in ('left', 'right') then s.thickness_mm else s.width_mm end) as fx
       from defects d join slabs s on s.id = d.slab_id join slab_conditions c on c.slab_id = d.slab_id
       ${whereSql(scope, [...scope.defectWhere, "d.position_along_mm is not null"])}`,
    )
    .raw()
    .all(scope.params) as [string, number, number | null][];
  const slabs = db.$client
    .prepare(`select count(distinct d.slab_id) from defects d join slab_conditions c on c.slab_id = d.slab_id ${whereSql(scope, scope.defectWhere)}`)
    .pluck()
    .get(scope.params) as number;
  const A = q.alongBins;
  const X = q.acrossBins;
  const binOf = (f: number, k: number) => Math.min(k - 1, Math.max(0, Math.floor(f * k)));
  const grid = FACES.map((face) => ({ face, along: new Array<number>(A).fill(0), across: new Array<number>(X).fill(0), cells: Array.from({ length: A }, () => new Array<number>(X).fill(0)) }));
  const byFace = new Map<string, number>();
  for (const [face, fa, fx] of rows) {
    byFace.set(face, (byFace.get(face) ?? 0) + 1);
    const g = grid.find((x) => x.face === face);
    if (!g) continue;
    const ai = binOf(fa, A);
    g.along[ai]!++;
    if (fx != null) {
      const xi = binOf(fx, X);
      g.across[xi]!++;
      g.cells[ai]![xi]!++;
    }
  }
  return {
    defects: rows.length,
    slabs,
    byFace: FACES.map((f) => ({ face: f, defects: byFace.get(f) ?? 0 })),
    grid,
    alongEdges: Array.from({ length: A + 1 }, (_, i) => i / A),
    acrossEdges: Array.from({ length: X + 1 }, (_, i) => i / X),
  };
}
