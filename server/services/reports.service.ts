/**
 * The quality engineer's reports. The slab is the unit. Every report reads slab_conditions (one row
 * per slab, its resolved conditions and where it sits) and decides "affected" from the defects that
 * pass the defect filters; the heavy lifting is one SQL aggregate, the statistics run on its groups
 * (server/stats). A continuous variable is grouped at a resolution ten times finer than it is shown
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

const SMALL_AFFECTED = 10;

export function variableSpec(key: string): VariableSpec {
  const v = VARIABLES.find((x) => x.key === key);
  if (!v) throw badRequest(`Unknown variable ${key}.`, { field: "variable" });
  return v;
}

/** Column of slab_conditions for a variable key (the keys are the column names; checked against the list). */
const column = (key: string) => `c.${variableSpec(key).key}`;
const grouped = (key: string) => `round(${column(key)}, ${variableSpec(key).digits + 1})`;

interface Scope {
  /** SQL conditions on slab_conditions c. */
  where: string[];
  params: Record<string, unknown>;
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
  if (!opts.skipDates) {
    const from = parseDateBound(f.from, false, "from");
    const to = parseDateBound(f.to, true, "to");
    if (from !== undefined) {
      where.push("c.cast_at >= @from");
      params.from = from;
    }
    if (to !== undefined) {
      where.push("c.cast_at <= @to");
      params.to = to;
    }
  }
  if (f.caster) where.push(`c.caster_id in ${inList(idsFor(sqlite, "casters", [f.caster], "caster", "caster"))}`);
  if (f.strand !== undefined) {
    const ids = sqlite.prepare("select id from strands where strand_no = ?").pluck().all(f.strand) as number[];
    where.push(ids.length ? `c.strand_id in ${inList(ids)}` : "0");
  }
  if (f.grade.length) where.push(`c.grade_id in ${inList(idsFor(sqlite, "grades", f.grade, "grade", "grade"))}`);
  if (f.family.length) where.push(`c.family_id in ${inList(idsFor(sqlite, "grade_families", f.family, "grade family", "family"))}`);
  if (f.transition) where.push(`c.transition = ${f.transition === "yes" ? 1 : 0}`);

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
    defectWhere,
    aff: `aff(id) as (select d.slab_id from defects d where ${defectWhere.join(" and ")} group by d.slab_id)`,
  };
}

const whereSql = (s: Scope, extra: string[] = []) => {
  const all = [...s.where, ...extra];
  return all.length ? `where ${all.join(" and ")}` : "";
};

/** (value, slabs, affected) groups of one variable over the scope. */
function variableGroups(db: Db, scope: Scope, key: string): Group[] {
  const rows = db.$client
    .prepare(
      `with ${scope.aff}
       select ${grouped(key)} as v, count(*) as n, count(a.id) as affected
       from slab_conditions c left join aff a on a.id = c.slab_id
       ${whereSql(scope, [`${column(key)} is not null`])}
       group by v`,
    )
    .raw()
    .all(scope.params) as [number, number, number][];
  return normalizeGroups(rows.map(([value, n, affected]) => ({ value, n, affected })));
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
  const scope = buildScope(db, q);
  const groups = variableGroups(db, scope, q.variable);
  const slabs = groups.reduce((s, g) => s + g.n, 0);
  const affected = groups.reduce((s, g) => s + g.affected, 0);
  const missing = db.$client
    .prepare(`select count(*) from slab_conditions c ${whereSql(scope, [`${column(q.variable)} is null`])}`)
    .pluck()
    .get(scope.params) as number;
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

const SEQ_BUCKET = "case when c.sequence_position is null then 'unknown' when c.sequence_position = 1 then '1st heat' when c.sequence_position <= 3 then '2nd–3rd heat' else '4th heat on' end";

export function screening(db: Db, q: z.output<typeof screeningQuerySchema>): Screening {
  const scope = buildScope(db, q);
  const vars = VARIABLES;
  const aggs = vars.map((v) => `count(c.${v.key}), sum(c.${v.key}), sum(c.${v.key} * c.${v.key})`).join(", ");
  // One pass over the slabs: numeric sums by outcome, and the categorical cross-tab, together.
  const rows = db.$client
    .prepare(
      `with ${scope.aff}
       select c.strand_id, c.family_id, c.transition, ${SEQ_BUCKET} as seq, (a.id is not null) as aff, count(*) as n, ${aggs}
       from slab_conditions c left join aff a on a.id = c.slab_id ${whereSql(scope)}
       group by 1, 2, 3, 4, 5`,
    )
    .raw()
    .all(scope.params) as (number | string | null)[][];
  const slabs = rows.reduce((s, r) => s + (r[5] as number), 0);
  const affected = rows.reduce((s, r) => s + (r[4] ? (r[5] as number) : 0), 0);
  const out: Screening["variables"] = [];
  vars.forEach((v, k) => {
    const base = 6 + 3 * k;
    const acc = [
      { n: 0, s: 0, ss: 0 },
      { n: 0, s: 0, ss: 0 },
    ];
    for (const r of rows) {
      const g = acc[r[4] ? 1 : 0]!;
      g.n += (r[base] as number) ?? 0;
      g.s += (r[base + 1] as number) ?? 0;
      g.ss += (r[base + 2] as number) ?? 0;
    }
    const [sound, aff] = acc as [typeof acc[0], typeof acc[0]];
    const stat = (g: typeof sound) => {
      const mean = g.s / g.n;
      return { n: g.n, mean, variance: g.n > 1 ? Math.max(0, (g.ss - g.n * mean * mean) / (g.n - 1)) : NaN };
    };
    const few = aff.n < SMALL_AFFECTED || sound.n < SMALL_AFFECTED;
    if (aff.n < 2 || sound.n < 2) {
      out.push({ key: v.key, label: v.label, kind: "numeric", n: aff.n + sound.n, statistic: null, df: null, p: null, pAdjusted: null, effect: null, meanAffected: aff.n ? aff.s / aff.n : null, meanSound: sound.n ? sound.s / sound.n : null, method: "Welch two-sample t test, two-sided", fewSlabs: true });
      return;
    }
    const a = stat(aff);
    const b = stat(sound);
    const t = a.variance > 0 || b.variance > 0 ? welchTTest(a, b) : { t: NaN, df: NaN, p: NaN };
    out.push({
      key: v.key, label: v.label, kind: "numeric", n: a.n + b.n, statistic: finite(t.t), df: finite(t.df), p: finite(t.p), pAdjusted: null,
      effect: a.mean - b.mean, meanAffected: a.mean, meanSound: b.mean, method: "Welch two-sample t test on the means, two-sided", fewSlabs: few,
    });
  });
  const strandLabels = new Map(
    (db.$client.prepare("select s.id, c.code, s.strand_no from strands s join casters c on c.id = s.caster_id").all() as { id: number; code: string; strand_no: number }[]).map((s) => [s.id, `${s.code} strand ${s.strand_no}`]),
  );
  const familyLabels = new Map((db.$client.prepare("select id, code from grade_families").all() as { id: number; code: string }[]).map((f) => [f.id, f.code]));
  const categorical: [string, string, (r: (number | string | null)[]) => string][] = [
    ["strand", "Strand", (r) => strandLabels.get(r[0] as number) ?? String(r[0])],
    ["grade_family", "Grade family", (r) => familyLabels.get(r[1] as number) ?? String(r[1])],
    ["transition", "Transition slab", (r) => (r[2] ? "transition" : "not transition")],
    ["sequence_position", "Position in sequence", (r) => String(r[3])],
  ];
  for (const [key, label, of] of categorical) {
    const byCat = new Map<string, { slabs: number; affected: number }>();
    for (const r of rows) {
      const c = byCat.get(of(r)) ?? { slabs: 0, affected: 0 };
      c.slabs += r[5] as number;
      if (r[4]) c.affected += r[5] as number;
      byCat.set(of(r), c);
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

const PERIOD_SQL = {
  day: "strftime('%Y-%m-%d', c.cast_at / 1000, 'unixepoch')",
  week: "strftime('%G-W%V', c.cast_at / 1000, 'unixepoch')",
  month: "strftime('%Y-%m', c.cast_at / 1000, 'unixepoch')",
} as const;

export function controlChart(db: Db, q: z.output<typeof controlChartQuerySchema>): ControlChart {
  const scope = buildScope(db, q);
  const rows = db.$client
    .prepare(
      `with ${scope.aff}
       select ${PERIOD_SQL[q.period]} as period, count(*) as n, count(a.id) as x
       from slab_conditions c left join aff a on a.id = c.slab_id ${whereSql(scope, ["c.cast_at is not null"])}
       group by period order by period`,
    )
    .all(scope.params) as { period: string; n: number; x: number }[];
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
  const sqlite = db.$client;
  const periodSql = PERIOD_SQL[q.period];
  const slabRows = sqlite
    .prepare(
      `with ${scope.aff}
       select ${periodSql} as period, count(*) as n, count(a.id) as x, coalesce(sum(c.weight_t), 0) as t
       from slab_conditions c left join aff a on a.id = c.slab_id ${whereSql(scope, ["c.cast_at is not null"])}
       group by period order by period`,
    )
    .all(scope.params) as { period: string; n: number; x: number; t: number }[];
  const defectRows = sqlite
    .prepare(
      `select ${periodSql} as period, count(*) as d from defects d join slab_conditions c on c.slab_id = d.slab_id
       ${whereSql(scope, [...scope.defectWhere, "c.cast_at is not null"])} group by period`,
    )
    .all(scope.params) as { period: string; d: number }[];
  const defectsBy = new Map(defectRows.map((r) => [r.period, r.d]));
  const row = (n: number, x: number, t: number, d: number) => ({ ...proportion(n, x), defects: d, tonnes: t, per100Slabs: finite(ratePer(d, n, 100)), per1000t: finite(ratePer(d, t, 1000)) });
  const periods = slabRows.map((r) => ({ period: r.period, ...row(r.n, r.x, r.t, defectsBy.get(r.period) ?? 0) }));
  const tot = slabRows.reduce((s, r) => ({ n: s.n + r.n, x: s.x + r.x, t: s.t + r.t }), { n: 0, x: 0, t: 0 });
  const totalDefects = defectRows.reduce((s, r) => s + r.d, 0);
  const paretoRows = sqlite
    .prepare(
      `select t.code, t.name, count(*) as defects, count(distinct d.slab_id) as slabs
       from defects d join defect_types t on t.id = d.type_id join slab_conditions c on c.slab_id = d.slab_id
       ${whereSql(scope, scope.defectWhere)} group by t.id order by defects desc, t.code`,
    )
    .all(scope.params) as { code: string; name: string; defects: number; slabs: number }[];
  const paretoTotal = paretoRows.reduce((s, r) => s + r.defects, 0);
  let cum = 0;
  const pareto = paretoRows.map((r) => {
    cum += r.defects;
    return { code: r.code, name: r.name, defects: r.defects, slabsAffected: r.slabs, share: r.defects / paretoTotal, cumulativeShare: cum / paretoTotal };
  });
  const byGrade = (
    sqlite
      .prepare(
        `with ${scope.aff}
         select g.code as grade, f.code as family, count(*) as n, count(a.id) as x
         from slab_conditions c left join aff a on a.id = c.slab_id join grades g on g.id = c.grade_id join grade_families f on f.id = c.family_id
         ${whereSql(scope)} group by c.grade_id order by g.code`,
      )
      .all(scope.params) as { grade: string; family: string; n: number; x: number }[]
  ).map((r) => ({ grade: r.grade, family: r.family, ...proportion(r.n, r.x) }));
  const byStrand = (
    sqlite
      .prepare(
        `with ${scope.aff}
         select ca.code as caster, st.strand_no as strand, count(*) as n, count(a.id) as x
         from slab_conditions c left join aff a on a.id = c.slab_id join strands st on st.id = c.strand_id join casters ca on ca.id = st.caster_id
         ${whereSql(scope)} group by c.strand_id order by ca.code, st.strand_no`,
      )
      .all(scope.params) as { caster: string; strand: number; n: number; x: number }[]
  ).map((r) => ({ caster: r.caster, strand: r.strand, ...proportion(r.n, r.x) }));
  return { period: q.period, totals: row(tot.n, tot.x, tot.t, totalDefects), periods, pareto, byGrade, byStrand };
}

export function processWindow(db: Db, q: z.output<typeof processWindowQuerySchema>): ProcessWindow {
  if (q.x === q.y) throw badRequest("Choose two different variables for the process window.", { field: "y" });
  const scope = buildScope(db, q);
  const sx = variableSpec(q.x);
  const sy = variableSpec(q.y);
  const edgesOf = (key: string, k: number) => {
    const g = variableGroups(db, scope, key);
    return q.binning === "quantile" ? quantileEdges(g, k) : equalWidthEdges(g, k);
  };
  const ex = edgesOf(q.x, q.xBins);
  const ey = edgesOf(q.y, q.yBins);
  const binExpr = (key: string, edges: number[]) => {
    // One bin (or a variable with a single value): every slab is in bin 0.
    if (edges.length <= 2) return "0";
    const inner = edges.slice(1, -1).map((e, i) => `when ${grouped(key)} < ${e} then ${i}`).join(" ");
    return `case ${inner} else ${edges.length - 2} end`;
  };
  const rows = db.$client
    .prepare(
      `with ${scope.aff}
       select ${binExpr(q.x, ex)} as xi, ${binExpr(q.y, ey)} as yi, count(*) as n, count(a.id) as x
       from slab_conditions c left join aff a on a.id = c.slab_id
       ${whereSql(scope, [`${column(q.x)} is not null`, `${column(q.y)} is not null`])}
       group by xi, yi`,
    )
    .all(scope.params) as { xi: number; yi: number; n: number; x: number }[];
  const found = new Map(rows.map((r) => [`${r.xi}:${r.yi}`, r]));
  const cells: ProcessWindow["cells"] = [];
  for (let xi = 0; xi < Math.max(1, ex.length - 1); xi++) {
    for (let yi = 0; yi < Math.max(1, ey.length - 1); yi++) {
      const r = found.get(`${xi}:${yi}`);
      const n = r?.n ?? 0;
      cells.push({
        xi, yi, xLower: ex[xi] ?? NaN, xUpper: ex[xi + 1] ?? ex[xi] ?? NaN, yLower: ey[yi] ?? NaN, yUpper: ey[yi + 1] ?? ey[yi] ?? NaN,
        ...proportion(n, r?.x ?? 0), sparse: n < q.minN,
      });
    }
  }
  return {
    x: { key: sx.key, label: sx.label, unit: sx.unit, edges: ex },
    y: { key: sy.key, label: sy.label, unit: sy.unit, edges: ey },
    minN: q.minN,
    slabs: rows.reduce((s, r) => s + r.n, 0),
    affected: rows.reduce((s, r) => s + r.x, 0),
    cells,
  };
}

export function beforeAfter(db: Db, q: z.output<typeof beforeAfterQuerySchema>): BeforeAfter {
  const count = (extra: string[], params: Record<string, unknown>, scope: Scope) => {
    const r = db.$client
      .prepare(`with ${scope.aff} select count(*) as n, count(a.id) as x from slab_conditions c left join aff a on a.id = c.slab_id ${whereSql(scope, extra)}`)
      .get({ ...scope.params, ...params }) as { n: number; x: number };
    return r;
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
    const range = (from: string, to: string) => ({ from: parseDateBound(from, false, "from")!, to: parseDateBound(to, true, "to")! });
    const ra = range(need(q.aFrom, "aFrom"), need(q.aTo, "aTo"));
    const rb = range(need(q.bFrom, "bFrom"), need(q.bTo, "bTo"));
    a = count(["c.cast_at >= @ra0", "c.cast_at <= @ra1"], { ra0: ra.from, ra1: ra.to }, scope);
    b = count(["c.cast_at >= @rb0", "c.cast_at <= @rb1"], { rb0: rb.from, rb1: rb.to }, scope);
    labels = [`${q.aFrom} – ${q.aTo}`, `${q.bFrom} – ${q.bTo}`];
  } else {
    if (!q.variable) throw badRequest("Give the variable whose two ranges are compared.", { field: "variable" });
    for (const f of ["aMin", "aMax", "bMin", "bMax"] as const) if (q[f] === undefined) throw badRequest(`Give ${f} for the range comparison.`, { field: f });
    const scope = buildScope(db, q);
    const col = column(q.variable);
    a = count([`${col} >= @amin`, `${col} <= @amax`], { amin: q.aMin, amax: q.aMax }, scope);
    b = count([`${col} >= @bmin`, `${col} <= @bmax`], { bmin: q.bMin, bmax: q.bMax }, scope);
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
