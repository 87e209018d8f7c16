/**
 * Every condition against the outcome. Per numeric variable the crude Welch t test on the means, and
 * a logistic odds ratio per interquartile range, crude and adjusted for the chosen terms (grade
 * family by default); per categorical variable the chi-square test and the adjusted test over its
 * levels. Ranked by the Benjamini–Hochberg adjusted p of the adjusted tests (or the crude ones).
 * Derived values are listed under the raw condition they come from and are not hypotheses of their
 * own: BH counts only the raw conditions actually tested.
 *
 * Each test (screenItem) reads the facts on its own, so a large screening shares its tests out over
 * helper threads (screening-threads.ts) with the same answer; BH and the ranking are done here.
 */
import type { z } from "zod";
import { termConflict, type Screening, type screeningQuerySchema } from "@shared/api/reports";
import { CATEGORICAL_LABELS, rawInputsOf, VARIABLES, type CategoricalKey } from "@shared/variables";
import type { Db } from "../../db/client";
import { chiSquareIndependence } from "../../stats/contingency";
import { oddsRatioForStep, ROWS_CHECKED, type MultiLogisticFit, type SlabColumns } from "../../stats/logistic-multi";
import { benjaminiHochberg } from "../../stats/multiple";
import { welchTTest } from "../../stats/regression";
import { RunningSpread } from "../../stats/spread";
import {
  completeRows,
  fitTerms,
  gridFromKeys,
  gridOf,
  groupingMethod,
  heatNumbering,
  MAX_PATTERNS,
  modelTerms,
  numericTerm,
  seWords,
  type Grid,
  type ModelTerm,
} from "./adjusted";
import { inWords, named, say } from "../../lib/words";
import { scratch } from "../../stats/scratch";
import { eachPiece, VARIABLE_SCALE } from "../report-cache";
import { buildScope, finite, scan, SMALL_AFFECTED, type Scanned } from "./scope";
import { shareOut } from "./screening-threads";

type Query = z.output<typeof screeningQuerySchema>;
type Row = Screening["variables"][number];
type AdjustedTest = NonNullable<Row["adjusted"]>;
/** The slabs with a value grouped by their grid key (numericPass), as the crude fit takes them. */
type Grouped = NonNullable<SlabColumns["grouped"]>;

/** The categorical variables screening tests, in the screens' words. */
const SCREENED_CATEGORICAL: CategoricalKey[] = ["strand", "grade_family", "transition", "sequence_position"];

/** The raw conditions a derived value comes from (however indirectly), and the one it is listed under. */
function lineage(key: string) {
  const derived = new Set(VARIABLES.filter((v) => v.derivedFrom).map((v) => v.key));
  const raw = rawInputsOf(key).filter((k) => !derived.has(k));
  return { derivedFrom: raw, parent: raw[0] ?? null };
}

/**
 * Type 7 quartiles (R's default) of grouped values over the rows, by counting their grid keys
 * (Math.round(v · scale), from numericPass, running lo … hi); sorting a copy of the values when the
 * grid is too wide.
 */
function interquartileRange(
  values: ArrayLike<number>,
  rows: ArrayLike<number>,
  scale: number,
  grid: { keys: Int32Array; lo: number; hi: number } | undefined,
  grouped?: Grouped,
): number | null {
  const n = rows.length;
  if (n === 0 || !grid) return null;
  const k0 = grid.lo;
  const width = grid.hi - grid.lo + 1;
  let at: (i: number) => number;
  if (width <= 4_000_000) {
    const counts = new Float64Array(width);
    // Slabs per grid key: numericPass counted them per pattern (one key each), else counted here.
    if (grouped) for (let r = 0; r < grouped.rep.length; r++) counts[grid.keys[grouped.rep[r]!]! - k0] = grouped.n[r]!;
    else for (let u = 0; u < n; u++) counts[grid.keys[rows[u]!]! - k0]!++;
    // The i-th smallest value (0-based), walking the cumulative counts (from the start again when asked for an earlier one).
    let k = 0;
    let cum = counts[0]!;
    let last = -1;
    at = (i: number) => {
      if (i < last) {
        k = 0;
        cum = counts[0]!;
      }
      last = i;
      while (cum <= i) cum += counts[++k]!;
      return (k + k0) / scale;
    };
  } else {
    const sorted = Float64Array.from({ length: n }, (_, u) => values[rows[u]!]!).sort();
    at = (i: number) => sorted[i]!;
  }
  const quantile = (q: number) => {
    const h = (n - 1) * q;
    const f = Math.floor(h);
    const a = at(f);
    const b = at(Math.min(n - 1, f + 1));
    return a + (h - f) * (b - a);
  };
  const q1 = quantile(0.25);
  const q3 = quantile(0.75);
  // The grid's steps are exact decimals: drop the binary rounding noise (0.0799999… → 0.08).
  return Number((q3 - q1).toPrecision(12));
}

/**
 * One pass over the slabs in scope for a numeric variable, doing what separate loops did before with
 * the same arithmetic in the same order: the Welch accumulators on the stored values (a Float32
 * column holds grid values: read back exactly), the grouped values (groupedValues) and their grid
 * keys (the fit's grid, so it does not compute them again), the slabs with a value (completeRows),
 * and the fits' grouping of those slabs: by grid key for the crude fit (with the count per key, for
 * the quartiles), and by grid key and the levels of the categorical adjustment terms for the
 * adjusted fit (`levels`: their grids), as the fits' collapseByPattern makes them from the grids.
 * With levels, only the latter is made slab by slab and the crude one from it (crudeFromAdjusted:
 * one thread's adjusted screening at five million slabs, in one process, 5.0–5.1 → 4.4–4.5 s, the
 * same digits).
 * The fits' grouping and the quartiles' count no longer walk the slabs again (one thread's time
 * per screening at five million slabs: 3.1 → 2.6 s crude, 6.3 → 5.0 s adjusted; Welford's division
 * per slab is hidden behind the pass's other work). The value and key arrays are reused
 * from variable to variable (scratch.ts): a term lives only while its variable is tested.
 *
 * A fit on the pass's grouping reads a slab's value and key only at each pattern's first slab and
 * at the first rows it checks (ROWS_CHECKED), so unless `everyValue` (the adjusted fit groups the
 * slabs itself: a condition among the adjustment terms) only those are written, and the term is
 * marked sparse: the pages of the two arrays that nothing writes are not the process's memory
 * (unless a full pass wrote them within the arrays' 30 s of reuse; measured at five million slabs:
 * 60–110 MB less at a screening's peak, one thread or two; the same time). Where a grouping came
 * out too wide for the pass after all, the pass runs again writing every slab's (the column is read
 * twice: the conditions spread wider than two million grid steps).
 */
export function numericPass(sc: Scanned, key: string, levels: Grid[] | null, everyValue: boolean): Pass {
  const { facts: f, rows } = sc;
  const stride = levels?.reduce((w, g) => w * Math.max(1, g.width), 1) ?? 0;
  // The adjustment's levels alone too many for the pass to group by: the adjusted fit groups itself.
  if (levels && stride > MAX_PATTERNS) everyValue = true;
  // Grouped by key and levels: the crude grouping is made from that one afterwards (crudeFromAdjusted), not slab by slab.
  const derive = !everyValue && levels !== null;
  const w: Walk = {
    everyValue,
    rows,
    aff: sc.affected,
    scale: VARIABLE_SCALE[key]!,
    values: scratch("screening.values", Float64Array, f.size),
    keys: scratch("screening.keys", Int32Array, f.size),
    withValue: scratch("screening.rows", Int32Array, rows.length),
    hitAcc: new RunningSpread(),
    soundAcc: new RunningSpread(),
    u: 0,
    n: 0,
    lo: Infinity,
    hi: -Infinity,
    // The fits' own grouping slots: the crude fit reads its grouping before any other fit groups, and
    // the adjusted fit reads its own before any fit makes pattern ids (adjusted.ts, patternIds).
    crude: derive ? null : newGrouping(1, scratch("collapse.patternOf", Int32Array, rows.length)),
    adjusted: levels && stride <= MAX_PATTERNS ? newGrouping(stride, scratch("patternIds", Int32Array, rows.length)) : null,
    levels: levels ?? [],
  };
  // The slabs in scope come in order: each piece of the column is walked once.
  eachPiece(f, key, (col, from, to) => walkPiece(w, col, from, to));
  const { values, keys, withValue, lo, hi, n } = w;
  const grid = gridFromKeys(keys, lo, hi);
  // Grouped here only where the fit would group by the grids' keys (else it hashes, as before).
  const done = (g: Grouping | null) =>
    g?.on && grid && grid.width * g.stride <= MAX_PATTERNS
      ? { rep: g.rep.subarray(0, g.patterns), s: g.s.subarray(0, g.patterns), n: g.count.subarray(0, g.patterns), patternOf: g.patternOf.subarray(0, n) }
      : undefined;
  const groupedAdjusted = done(w.adjusted);
  const derived = derive && groupedAdjusted && grid ? crudeFromAdjusted(groupedAdjusted, keys, grid) : undefined;
  const grouped = derive ? derived?.counts : done(w.crude);
  // Values and keys written only where the fits read them, but a fit groups the slabs itself after
  // all (keys spread wider than it groups by): the pass again, writing every slab's. (No slab with
  // a value: nothing is fitted.)
  if (!everyValue && n > 0 && (!grouped || (levels && !groupedAdjusted))) return numericPass(sc, key, levels, true);
  return {
    hitAcc: w.hitAcc,
    soundAcc: w.soundAcc,
    term: { ...numericTerm(key, values, grid), sparse: !everyValue },
    withValue: withValue.subarray(0, n),
    grid: n > 0 ? { keys, lo, hi } : undefined,
    grouped,
    groupedAdjusted,
    crudeGrouping: derived ? derived.grouping : () => grouped,
    crudeAfterAdjusted: derived !== undefined,
  };
}

interface Pass {
  hitAcc: RunningSpread;
  soundAcc: RunningSpread;
  term: ModelTerm;
  withValue: Int32Array;
  grid: { keys: Int32Array; lo: number; hi: number } | undefined;
  /**
   * The crude grouping's patterns, for the quartiles (where it is made from the adjusted grouping,
   * its patternOf here is empty: the fit takes crudeGrouping()).
   */
  grouped: Grouped | undefined;
  groupedAdjusted: Grouped | undefined;
  /** The crude grouping for its fit; made from the adjusted one, it takes over that one's per-slab array (read the adjusted fit first: crudeAfterAdjusted). */
  crudeGrouping: () => Grouped | undefined;
  crudeAfterAdjusted: boolean;
}

/**
 * The crude fit's grouping made from the adjusted fit's (by grid key and the adjustment's levels)
 * instead of grouping each slab twice: the same patterns, numbered the same and summed the same
 * as if grouped by key alone. A key's first slab is the first slab of one of its (key, level)
 * patterns, and the adjusted patterns are numbered in the order of their first slabs, so taking
 * them in order numbers the keys in the order of theirs; its affected slabs and slabs are sums of
 * whole numbers, exact in any order. The patterns are made at once (a loop over the patterns); the
 * per-slab array is the adjusted grouping's, rewritten to the crude patterns in place when the
 * crude fit asks for it, after the adjusted fit (one lookup less per slab in the pass; the crude
 * slot's array is still made, by the categorical tests' own grouping, so no memory is saved). Only
 * each pattern's first slab's key is read (numericPass writes it).
 */
function crudeFromAdjusted(adj: Grouped, keys: Int32Array, grid: Grid) {
  const count = adj.rep.length;
  const lookup = new Int32Array(grid.width).fill(-1);
  const crudeOf = new Int32Array(count);
  const rep = new Int32Array(count);
  const s = new Float64Array(count);
  const n = new Float64Array(count);
  let patterns = 0;
  for (let j = 0; j < count; j++) {
    const at = keys[adj.rep[j]!]! - grid.offset;
    let c = lookup[at]!;
    if (c < 0) {
      lookup[at] = c = patterns++;
      rep[c] = adj.rep[j]!;
    }
    crudeOf[j] = c;
    s[c]! += adj.s[j]!;
    n[c]! += adj.n[j]!;
  }
  const counts: Grouped = { rep: rep.subarray(0, patterns), s: s.subarray(0, patterns), n: n.subarray(0, patterns), patternOf: new Int32Array(0) };
  let rewritten = false;
  return {
    counts,
    grouping: (): Grouped => {
      if (!rewritten) {
        const of = adj.patternOf;
        for (let u = 0; u < of.length; u++) of[u] = crudeOf[of[u]!]!;
        // The adjusted grouping is the crude one's now: a fit given it after this refuses it (lengths).
        adj.rep = new Int32Array(0);
        rewritten = true;
      }
      return { ...counts, patternOf: adj.patternOf };
    },
  };
}

/**
 * A fit's grouping of the slabs with a value, made as numericPass walks them (collapseByPattern's,
 * from the ids the fit would make: patterns in order of first appearance, affected and slabs added
 * in row order). lookup[(key − base) · stride + level] is the pattern of a grid key and a level of
 * the categorical terms together (−1: none yet); `on` false once the keys spread wider than a fit
 * groups by lookup (it hashes then).
 */
interface Grouping {
  on: boolean;
  stride: number;
  base: number;
  lookup: Int32Array;
  patterns: number;
  rep: Int32Array;
  s: Float64Array;
  count: Float64Array;
  patternOf: Int32Array;
}

const newGrouping = (stride: number, patternOf: Int32Array): Grouping => ({
  on: true,
  stride,
  base: 0,
  lookup: new Int32Array(0),
  patterns: 0,
  rep: new Int32Array(1024),
  s: new Float64Array(1024),
  count: new Float64Array(1024),
  patternOf,
});

/** numericPass's state from piece to piece. */
interface Walk {
  /**
   * Every slab's value and key written (a fit reads them all); else only those the fits on the
   * pass's groupings read: each pattern's first slab, and the first rows, which a fit checks.
   */
  everyValue: boolean;
  rows: Int32Array;
  aff: Uint8Array;
  scale: number;
  values: Float64Array;
  keys: Int32Array;
  withValue: Int32Array;
  /** Means and variances per outcome (Welford). */
  hitAcc: RunningSpread;
  soundAcc: RunningSpread;
  /** The next slab in scope, the slabs with a value so far, and their lowest and highest grid key. */
  u: number;
  n: number;
  lo: number;
  hi: number;
  /** Null where the crude grouping is made from the adjusted one afterwards (crudeFromAdjusted). */
  crude: Grouping | null;
  adjusted: Grouping | null;
  /** The categorical adjustment terms' grids (their levels 0 … width − 1 per slab). */
  levels: Grid[];
}

/**
 * Room in the grouping's lookup for grid keys lo … hi (with as much again to spare), the patterns
 * kept; false when the keys spread wider than a fit groups by lookup.
 */
function widenLookup(g: Grouping, lo: number, hi: number): boolean {
  const span = hi - lo + 1;
  if (span * g.stride > MAX_PATTERNS || !(Math.abs(lo) < 2 ** 31 && Math.abs(hi) < 2 ** 31)) return false;
  // At most as many entries as a fit groups by lookup (span ≤ that, checked above): a wide stride never asks for more.
  const room = Math.max(span, Math.min(2 * span + 64, Math.floor(MAX_PATTERNS / g.stride)));
  const base = lo - Math.floor((room - span) / 2);
  const lookup = new Int32Array(room * g.stride).fill(-1);
  const old = g.lookup;
  const shift = (g.base - base) * g.stride;
  for (let j = 0; j < old.length; j++) if (old[j]! >= 0) lookup[j + shift] = old[j]!;
  g.lookup = lookup;
  g.base = base;
  return true;
}

/** Slab i (affected a), the n-th with a value, into its pattern at lookup[at]: a new one if none yet (then true). */
function addToPattern(g: Grouping, at: number, i: number, a: number, n: number): boolean {
  let pid = g.lookup[at]!;
  const fresh = pid < 0;
  if (fresh) {
    if (g.patterns === g.rep.length) {
      const grow = <T extends Int32Array | Float64Array>(x: T): T => {
        const y = new (x.constructor as { new (n: number): T })(x.length * 2);
        y.set(x);
        return y;
      };
      g.rep = grow(g.rep);
      g.s = grow(g.s);
      g.count = grow(g.count);
    }
    g.lookup[at] = pid = g.patterns++;
    g.rep[pid] = i;
    g.s[pid] = 0;
    g.count[pid] = 0;
  }
  g.s[pid]! += a;
  g.count[pid]! += 1;
  g.patternOf[n] = pid;
  return fresh;
}

/** Slab i into grouping g by its grid key k and level (the room widened first when k is outside it); true when it is a pattern's first. */
function group(g: Grouping, k: number, level: number, lo: number, hi: number, i: number, a: number, n: number): boolean {
  let at = k - g.base;
  if (!(at >= 0 && at * g.stride < g.lookup.length)) {
    g.on = widenLookup(g, lo, hi);
    if (!g.on) return false;
    at = k - g.base;
  }
  return addToPattern(g, at * g.stride + level, i, a, n);
}

/**
 * numericPass over one piece of the column (values[i − from] is slab row i's), its state in locals
 * for speed.
 */
function walkPiece(w: Walk, col: ArrayLike<number>, from: number, to: number) {
  const { everyValue, rows, aff, scale, values, keys, withValue, hitAcc, soundAcc, crude, adjusted, levels } = w;
  const onGrid = col instanceof Float32Array;
  // One adjustment term (the common case: the grade family) read directly, more through the loop.
  const only = levels.length === 1 ? levels[0]!.keys : null;
  let { u, n, lo, hi } = w;
  for (; u < rows.length; u++) {
    const i = rows[u]!;
    if (i >= to) break;
    const r = col[i - from]!;
    if (r !== r) {
      if (everyValue) values[i] = NaN;
      continue;
    }
    const g = Math.round(r * scale) / scale;
    const a = aff[i]!;
    // Means and variances per outcome computed stably (Welford; a value that is not a finite number is passed over).
    if (a) hitAcc.add(onGrid ? g : r);
    else soundAcc.add(onGrid ? g : r);
    if (everyValue) values[i] = g;
    if (!Number.isFinite(g)) continue;
    const k = Math.round(g * scale);
    if (k < lo) lo = k;
    if (k > hi) hi = k;
    let first = everyValue || n < ROWS_CHECKED;
    if (crude !== null && crude.on && group(crude, k, 0, lo, hi, i, a, n)) first = true;
    if (adjusted?.on) {
      let level = 0;
      if (only) level = only[i]! - levels[0]!.offset;
      else for (const l of levels) level = level * l.width + (l.keys[i]! - l.offset);
      if (group(adjusted, k, level, lo, hi, i, a, n)) first = true;
    }
    if (first) {
      if (!everyValue) values[i] = g;
      keys[i] = k;
    }
    withValue[n++] = i;
  }
  Object.assign(w, { u, n, lo, hi });
}

/** The test of one variable in a model with the adjustment terms (those it does not itself name). */
function adjustedTest(
  sc: Scanned,
  q: Query,
  key: string,
  term: ModelTerm,
  adjust: ModelTerm[],
  iqr: number | null,
  termRows: Int32Array,
  pass?: Pick<Pass, "crudeGrouping" | "groupedAdjusted" | "crudeAfterAdjusted">,
): { test: AdjustedTest; crudeFit: MultiLogisticFit | null } {
  const others = adjust.filter((t) => t.key !== key);
  const blank: AdjustedTest = {
    oddsRatioPerIqr: null,
    ciLower: null,
    ciUpper: null,
    p: null,
    pAdjusted: null,
    statistic: null,
    df: null,
    test: "",
    reason: null,
  };
  const conflict = termConflict([key, ...others.map((t) => t.key)]);
  if (conflict) return { test: { ...blank, reason: say("screening.notAdjusted", { why: conflict }) }, crudeFit: null };
  const terms = [term, ...others];
  // Categorical terms are known for every slab: the term's own slabs are the model's.
  const rows = others.some((t) => t.kind === "numeric") ? completeRows(sc, terms).rows : termRows;
  // numericPass's groupings, of the term's own slabs (every other term categorical). The crude fit
  // first where its grouping lives in the slot the adjusted fit groups in; after it where its
  // grouping is made from the adjusted one's (crudeFromAdjusted). Each fit's numbers are its own
  // either way.
  const own = rows === termRows && pass !== undefined;
  const fitCrude = () => (term.kind === "numeric" ? fitTerms(sc, [term], rows, q.se, false, true, own ? pass!.crudeGrouping() : undefined) : null);
  const fitAdjusted = () =>
    fitTerms(sc, terms, rows, q.se, true, true, own ? (others.length === 0 ? pass!.crudeGrouping() : pass!.groupedAdjusted) : undefined);
  let crudeFit: MultiLogisticFit | null;
  let fit: MultiLogisticFit;
  if (own && pass!.crudeAfterAdjusted) {
    fit = fitAdjusted();
    crudeFit = fitCrude();
  } else {
    crudeFit = fitCrude();
    fit = fitAdjusted();
  }
  const v = fit.variables[0]!;
  const lr = q.se === "model";
  const within = others.length === adjust.length ? "" : others.length === 0 ? say("screening.withinAlone") : say("screening.withinPart");
  if (term.kind === "categorical") {
    const p = lr ? v.lrP : v.waldP;
    return {
      test: {
        ...blank,
        p: finite(p ?? NaN),
        statistic: finite((lr ? v.lrChi2 : v.waldChi2) ?? NaN),
        df: v.df || null,
        test: say(`screening.levels_${lr ? "model" : "cluster"}`, { within }),
        reason: p === null ? (v.reason ?? fit.separation?.description ?? fit.reason ?? say("screening.notTestable")) : null,
      },
      crudeFit,
    };
  }
  const t = fit.terms.find((x) => x.variable === term.label);
  if (!t || t.coef === null || t.se === null || iqr === null || !(iqr > 0)) {
    return {
      test: {
        ...blank,
        reason: v.reason ?? fit.separation?.description ?? fit.reason ?? say(iqr === 0 ? "screening.iqrZero" : "screening.notTestable"),
      },
      crudeFit,
    };
  }
  const or = oddsRatioForStep(t.coef, t.se, iqr);
  return {
    test: {
      oddsRatioPerIqr: finite(or.oddsRatio ?? NaN),
      ciLower: finite(or.ciLower ?? NaN),
      ciUpper: finite(or.ciUpper ?? NaN),
      p: finite(t.p ?? NaN),
      pAdjusted: null,
      statistic: finite(t.z ?? NaN),
      df: null,
      test: say(`screening.waldSlope_${q.se === "cluster" ? "cluster" : "model"}`, { within }),
      reason: null,
    },
    crudeFit,
  };
}

/** What every test of one screening shares: its slabs, its question and the adjustment terms. */
export interface ScreeningContext {
  db: Db;
  sc: Scanned;
  q: Query;
  adjust: ModelTerm[];
  adjusting: boolean;
  /** Affected slabs in scope. */
  affected: number;
}

export function screeningContext(db: Db, sc: Scanned, q: Query): ScreeningContext {
  const { rows, affected: aff } = sc;
  let affected = 0;
  for (let u = 0; u < rows.length; u++) affected += aff[rows[u]!]!;
  const adjusting = q.adjustFor.length > 0;
  return { db, sc, q, adjust: adjusting ? modelTerms(db, sc, q.adjustFor) : [], adjusting, affected };
}

/** The tests of one screening, each on its own: every numeric variable, then the categorical ones. */
export const SCREENING_ITEMS = VARIABLES.length + SCREENED_CATEGORICAL.length;

/** Test number `index` (0 … SCREENING_ITEMS − 1): a row of the screening before the BH step and the ranking. */
export function screenItem(ctx: ScreeningContext, index: number): Row {
  return index < VARIABLES.length ? screenNumeric(ctx, VARIABLES[index]!) : screenCategorical(ctx, SCREENED_CATEGORICAL[index - VARIABLES.length]!);
}

function screenNumeric(ctx: ScreeningContext, v: (typeof VARIABLES)[number]): Row {
  const { sc, q, adjust, adjusting } = ctx;
  // Welch's accumulators, the model term and the slabs with a value, in one pass.
  // The categorical adjustment terms' levels (when every term beside this one is categorical): the pass groups by them too.
  const others = adjust.filter((t) => t.key !== v.key);
  const levels = adjusting && others.length > 0 && others.every((t) => t.kind === "categorical") ? others.map((t) => gridOf(sc, t)) : null;
  const byLevels = levels?.every((g) => g !== null) ? (levels as Grid[]) : null;
  // The adjusted fit reads every slab's value unless it fits on the pass's grouping by those levels.
  const pass = numericPass(sc, v.key, byLevels, adjusting && others.length > 0 && !byLevels);
  const { hitAcc, soundAcc, term, withValue } = pass;
  const hit = hitAcc.result();
  const sound = soundAcc.result();
  const all = new RunningSpread().merge(hitAcc).merge(soundAcc).result();
  const { derivedFrom, parent } = lineage(v.key);
  const method = say("screening.welchRow");
  const base = {
    key: v.key,
    label: v.label,
    kind: "numeric" as const,
    n: hit.n + sound.n,
    pAdjusted: null,
    method,
    meanAffected: hit.mean,
    meanSound: sound.mean,
    effect: hit.mean !== null && sound.mean !== null ? hit.mean - sound.mean : null,
    parent,
    derivedFrom,
    countedInBh: false,
    categories: undefined,
  };
  if (all.noSpread) {
    const reason = say("screening.notTestableBecause", {
      why: all.n === 0 ? say("screening.noValue") : say("screening.noSpread", { why: String(all.reason) }),
    });
    return { ...base, statistic: null, df: null, p: null, fewSlabs: true, testable: false, reason, iqr: null, crude: null, adjusted: null };
  }
  let statistic: number | null = null;
  let df: number | null = null;
  let p: number | null = null;
  let reason: string | null = null;
  if (hit.n < 2 || sound.n < 2) reason = say("screening.tooFewForT");
  else if (!(hit.variance! > 0 || sound.variance! > 0)) reason = say("screening.noSpreadWithin");
  else {
    const t = welchTTest({ n: hit.n, mean: hit.mean!, variance: hit.variance! }, { n: sound.n, mean: sound.mean!, variance: sound.variance! });
    statistic = finite(t.t);
    df = finite(t.df);
    p = finite(t.p);
  }
  // Logistic odds ratios per IQR, crude and adjusted, on the slabs with every value the adjusted model needs.
  const values = (term.column as { values: ArrayLike<number> }).values;
  const iqr = interquartileRange(values, withValue, 10 ** (v.digits + 1), pass.grid, pass.grouped);
  let crude: Row["crude"] = null;
  let adjusted: Row["adjusted"] = null;
  const crudeOf = (fit: MultiLogisticFit) => {
    const t = fit.terms[0];
    if (!t || t.coef === null || t.se === null || iqr === null || !(iqr > 0)) return { oddsRatioPerIqr: null, ciLower: null, ciUpper: null, p: t?.p ?? null };
    const or = oddsRatioForStep(t.coef, t.se, iqr);
    return { oddsRatioPerIqr: finite(or.oddsRatio ?? NaN), ciLower: finite(or.ciLower ?? NaN), ciUpper: finite(or.ciUpper ?? NaN), p: finite(t.p ?? NaN) };
  };
  if (adjusting) {
    const r = adjustedTest(sc, q, v.key, term, adjust, iqr, withValue, pass);
    adjusted = r.test;
    crude = r.crudeFit ? crudeOf(r.crudeFit) : crudeOf(fitTerms(sc, [term], withValue, q.se, false, true, pass.crudeGrouping()));
  } else {
    crude = crudeOf(fitTerms(sc, [term], withValue, q.se, false, true, pass.crudeGrouping()));
  }
  return {
    ...base,
    statistic,
    df,
    p,
    fewSlabs: hit.n < SMALL_AFFECTED || sound.n < SMALL_AFFECTED,
    testable: true,
    reason,
    iqr,
    crude,
    adjusted,
  };
}

function screenCategorical(ctx: ScreeningContext, key: CategoricalKey): Row {
  const { db, sc, q, adjust, adjusting, affected } = ctx;
  const { rows, affected: aff } = sc;
  const slabs = rows.length;
  const [term] = modelTerms(db, sc, [key]);
  const col = term!.column as { codes: ArrayLike<number>; label: (c: number) => string };
  const byCode = new Map<number, { slabs: number; affected: number }>();
  // Slabs of one heat sit side by side and share their codes: look the code up only when it changes.
  let last = NaN;
  let c = { slabs: 0, affected: 0 };
  for (let u = 0; u < slabs; u++) {
    const i = rows[u]!;
    const code = col.codes[i]!;
    if (code !== last) {
      last = code;
      const known = byCode.get(code);
      if (known) c = known;
      else byCode.set(code, (c = { slabs: 0, affected: 0 }));
    }
    c.slabs++;
    c.affected += aff[i]!;
  }
  const cats = [...byCode.entries()].map(([code, c]) => [col.label(code), c] as const).sort(([x], [y]) => x.localeCompare(y));
  const chi = cats.length > 1 ? chiSquareIndependence(cats.map(([, c]) => [c.affected, c.slabs - c.affected])) : null;
  const testable = cats.length > 1;
  // Why not (no slab at all is said as such, not as "only one category").
  const untestable = say(slabs === 0 ? "screening.noSlab" : "screening.oneCategory");
  return {
    key,
    label: CATEGORICAL_LABELS[key],
    kind: "categorical",
    n: slabs,
    statistic: chi ? finite(chi.statistic) : null,
    df: chi?.df ?? null,
    p: chi ? finite(chi.p) : null,
    pAdjusted: null,
    effect: null,
    meanAffected: null,
    meanSound: null,
    categories: cats.map(([l, c]) => ({ label: l, slabs: c.slabs, affected: c.affected, rate: c.slabs ? c.affected / c.slabs : null })),
    method: chi ? chi.method : untestable,
    fewSlabs: !chi || chi.smallExpected > 0 || affected < SMALL_AFFECTED,
    testable,
    reason: testable ? null : say("screening.notTestableBecause", { why: untestable }),
    parent: null,
    derivedFrom: [],
    countedInBh: false,
    iqr: null,
    crude: null,
    adjusted: adjusting && testable ? adjustedTest(sc, q, key, term!, adjust, null, rows).test : null,
  };
}

export function screening(db: Db, q: Query): Screening {
  const sc = scan(db, buildScope(db, q), { reuse: "screening.scope" });
  const ctx = screeningContext(db, sc, q);
  const { adjust, adjusting, affected } = ctx;
  const slabs = sc.rows.length;
  // The tests are independent of each other: shared out over the processor's cores when the slabs are many.
  // The heats are numbered, and the categorical adjustment terms' grids made, once, here, for every thread's fits.
  const heats = q.se === "cluster" ? heatNumbering(sc, true) : undefined;
  const grids = adjust.map((t, k) => (t.kind === "categorical" ? gridOf(sc, t, `screening.grid.${k}`) : null));
  const out: Row[] = shareOut({ ...ctx, heats, grids }, SCREENING_ITEMS, (i) => screenItem(ctx, i));

  // Benjamini–Hochberg over the tests actually made on raw conditions (derived values are the same hypotheses again).
  const counted = out.filter((v) => v.parent === null && v.derivedFrom.length === 0);
  const crudeTested = counted.filter((v) => v.p !== null);
  benjaminiHochberg(crudeTested.map((v) => v.p!)).forEach((p, i) => (crudeTested[i]!.pAdjusted = p));
  const adjustedTested = counted.filter((v) => v.adjusted?.p != null);
  benjaminiHochberg(adjustedTested.map((v) => v.adjusted!.p!)).forEach((p, i) => (adjustedTested[i]!.adjusted!.pAdjusted = p));
  for (const v of counted) v.countedInBh = v.p !== null || v.adjusted?.p != null;

  const rankBy = adjusting && q.rankBy === "adjusted" ? "adjusted" : "crude";
  const keyOf = (v: Row) => (rankBy === "adjusted" ? [v.adjusted?.pAdjusted ?? v.adjusted?.p ?? 2, v.adjusted?.p ?? 2] : [v.pAdjusted ?? v.p ?? 2, v.p ?? 2]);
  const byRank = (x: Row, y: Row) => {
    const [a1, a2] = keyOf(x);
    const [b1, b2] = keyOf(y);
    return Number(!x.testable) - Number(!y.testable) || a1! - b1! || a2! - b2! || (x.p ?? 2) - (y.p ?? 2);
  };
  // Raw conditions in rank order, each followed by the derived values listed under it.
  const raw = out.filter((v) => v.parent === null).sort(byRank);
  const ordered: Row[] = [];
  for (const r of raw) {
    ordered.push(r);
    ordered.push(...out.filter((v) => v.parent === r.key).sort(byRank));
  }
  ordered.push(...out.filter((v) => v.parent !== null && !raw.some((r) => r.key === v.parent)));

  const adjustWords = adjust.map((t) => inWords(t.label)).join(", ");
  const notes = [
    adjusting
      ? say("screening.bhAdjusted", { count: crudeTested.length, adjusted: adjustedTested.length })
      : say("screening.bh", { count: crudeTested.length }),
    say(adjusting ? (rankBy === "adjusted" ? "screening.rankedAdjusted" : "screening.rankedCrudeAdjusting") : "screening.rankedCrude", { terms: adjustWords }),
    say("screening.notCause"),
  ];
  const untestable = out.filter((v) => !v.testable);
  // The list names each reason without its "not testable: " (the note says it once).
  const notTestable = say("screening.notTestableBecause", { why: "" });
  if (untestable.length)
    notes.push(
      say("screening.untestable", {
        list: untestable
          .map((v) =>
            say("screening.untestableItem", {
              label: named(v.label),
              reason: v.reason!.startsWith(notTestable) ? v.reason!.slice(notTestable.length) : v.reason!,
            }),
          )
          .join("; "),
      }),
    );
  if (affected < SMALL_AFFECTED) notes.push(say("screening.fewAffected", { count: affected }));
  return {
    slabs,
    affected,
    variables: ordered,
    adjustFor: adjust.map((t) => ({ key: t.key, label: t.label, unit: t.kind === "numeric" ? t.unit : null, kind: t.kind })),
    seMethod: q.se,
    rankBy,
    tests: { crude: crudeTested.length, adjusted: adjustedTested.length },
    methods: {
      welch: say("screening.method.welch"),
      chiSquare: say("screening.method.chiSquare"),
      crude: say("screening.method.crude", { se: seWords(q.se) }),
      ...(adjusting ? { adjusted: say(`screening.method.adjusted_${q.se === "model" ? "model" : "cluster"}`, { terms: adjustWords, se: seWords(q.se) }) } : {}),
      multiplicity: say("screening.method.multiplicity"),
      grouping: groupingMethod(),
    },
    notes,
  };
}
