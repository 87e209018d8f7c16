/** Two periods, or two ranges of one condition, compared; optionally within the levels of a categorical key. */
import type { z } from "zod";
import type { BeforeAfter, beforeAfterQuerySchema } from "@shared/api/reports";
import type { Db } from "../../db/client";
import { parseDateBound } from "../../lib/dates";
import { badRequest, figure, said } from "../../lib/http-error";
import { chiSquareIndependence, fisherExact2x2 } from "../../stats/contingency";
import { changeInEstimate } from "../../stats/logistic-multi";
import { differenceOfProportions } from "../../stats/proportions";
import { differenceOfStandardisedRates, type RateStratum } from "../../stats/standardise";
import { mantelHaenszel, stratumOddsRatio, type Stratum2x2 } from "../../stats/stratified";
import { exactColumn } from "../report-cache";
import { buildScope, finite, proportion, scan, variableSpec, type Scanned } from "./scope";
import { countByLevel, naturalOrder, stratifier } from "./strata";
import { currentLanguage, dec, named, num, say } from "../../lib/words";

type Query = z.output<typeof beforeAfterQuerySchema>;
type Stratified = NonNullable<BeforeAfter["stratified"]>;

const day = (ms: number) => new Date(ms).toISOString().slice(0, 10);

/** The two groups as row filters over one scan, with their labels; refuses reversed or overlapping groups. */
function groupsOf(db: Db, q: Query): { sc: Scanned; inA: (i: number) => boolean; inB: (i: number) => boolean; labels: [string, string] } {
  if (q.mode === "periods") {
    const need = (v: string | undefined, f: string) => {
      if (!v) throw badRequest(said("reports.periodBoundMissing", { field: f }), { field: f });
      return v;
    };
    const aFrom = parseDateBound(need(q.aFrom, "aFrom"), false, "aFrom")!;
    const aTo = parseDateBound(need(q.aTo, "aTo"), true, "aTo")!;
    const bFrom = parseDateBound(need(q.bFrom, "bFrom"), false, "bFrom")!;
    const bTo = parseDateBound(need(q.bTo, "bTo"), true, "bTo")!;
    if (aFrom > aTo) throw badRequest(said("reports.periodReversed.a", { from: q.aFrom!, to: q.aTo! }), { field: "aTo" });
    if (bFrom > bTo) throw badRequest(said("reports.periodReversed.b", { from: q.bFrom!, to: q.bTo! }), { field: "bTo" });
    if (aFrom <= bTo && bFrom <= aTo) {
      const from = Math.max(aFrom, bFrom);
      const to = Math.min(aTo, bTo);
      throw badRequest(
        day(from) === day(to) ? said("reports.periodsOverlapDay", { day: day(from) }) : said("reports.periodsOverlap", { from: day(from), to: day(to) }),
        { field: "bFrom" },
      );
    }
    // One scan over both periods (the filters' own dates do not apply: each side takes its own).
    const sc = scan(db, buildScope(db, q, { skipDates: true }), { from: Math.min(aFrom, bFrom), to: Math.max(aTo, bTo) });
    const at = sc.facts.castAt;
    return {
      sc,
      inA: (i) => at[i]! >= aFrom && at[i]! <= aTo,
      inB: (i) => at[i]! >= bFrom && at[i]! <= bTo,
      labels: [`${q.aFrom} – ${q.aTo}`, `${q.bFrom} – ${q.bTo}`],
    };
  }
  if (!q.variable) throw badRequest(said("reports.rangeVariableMissing"), { field: "variable" });
  for (const f of ["aMin", "aMax", "bMin", "bMax"] as const)
    if (q[f] === undefined) throw badRequest(said("reports.rangeBoundMissing", { field: f }), { field: f });
  const s = variableSpec(q.variable);
  const [aMin, aMax, bMin, bMax] = [q.aMin!, q.aMax!, q.bMin!, q.bMax!];
  const u = s.unit === "–" ? "" : ` ${s.unit}`;
  const q_ = (x: number) => figure(x, { group: false });
  if (aMin > aMax) throw badRequest(said("reports.rangeReversed.a", { min: q_(aMin), max: q_(aMax), unit: u }), { field: "aMax" });
  if (bMin > bMax) throw badRequest(said("reports.rangeReversed.b", { min: q_(bMin), max: q_(bMax), unit: u }), { field: "bMax" });
  if (aMin <= bMax && bMin <= aMax) {
    throw badRequest(
      said("reports.rangesOverlap", {
        aMin: q_(aMin),
        aMax: q_(aMax),
        bMin: q_(bMin),
        bMax: q_(bMax),
        from: q_(Math.max(aMin, bMin)),
        to: q_(Math.min(aMax, bMax)),
        unit: u,
      }),
      {
        field: "bMin",
      },
    );
  }
  const sc = scan(db, buildScope(db, q));
  // The slabs' own values (a Float32 column of the cache holds grid values: read back exactly).
  const col = exactColumn(sc.facts, s.key);
  return {
    sc,
    inA: (i) => col[i]! >= aMin && col[i]! <= aMax,
    inB: (i) => col[i]! >= bMin && col[i]! <= bMax,
    labels: [`${named(s.label)} ${num(aMin)}–${num(aMax)}${u}`, `${named(s.label)} ${num(bMin)}–${num(bMax)}${u}`],
  };
}

export function beforeAfter(db: Db, q: Query): BeforeAfter {
  const { sc, inA, inB, labels } = groupsOf(db, q);
  const rowsA: number[] = [];
  const rowsB: number[] = [];
  for (const i of sc.rows) {
    if (inA(i)) rowsA.push(i);
    else if (inB(i)) rowsB.push(i);
  }
  const tally = (rows: number[]) => ({ n: rows.length, x: rows.reduce((s, i) => s + sc.affected[i]!, 0) });
  const a = tally(rowsA);
  const b = tally(rowsB);
  const d = differenceOfProportions(b.x, b.n, a.x, a.n);
  const table: [[number, number], [number, number]] = [
    [a.x, a.n - a.x],
    [b.x, b.n - b.x],
  ];
  const notes: string[] = [];
  let test: BeforeAfter["test"];
  const empty = [a.n === 0 && "A", b.n === 0 && "B"].filter(Boolean);
  if (empty.length) {
    const reason = say(`ba.groupEmpty_${empty.join("")}`);
    test = { name: "none", p: null, method: say("ba.noTest"), reason };
    notes.push(say("ba.noTestNote", { why: reason }));
  } else if (a.x + b.x === 0 || a.x + b.x === a.n + b.n) {
    const reason = say(a.x + b.x === 0 ? "ba.noneAffected" : "ba.allAffected");
    test = { name: "none", p: null, method: say("ba.noTest"), reason: say("ba.cannotDiffer", { why: reason }) };
    notes.push(say("ba.noTestNote", { why: reason }));
  } else {
    const chi = chiSquareIndependence(table);
    test =
      chi.smallExpected > 0
        ? { name: "fisher", p: finite(fisherExact2x2(table).pTwoSided), method: say("ba.fisher"), reason: null }
        : { name: "chi-square", p: finite(chi.p), method: say("ba.chiSquare"), reason: null };
  }
  notes.push(say("ba.independent"));
  const out: BeforeAfter = {
    mode: q.mode,
    a: { label: labels[0], ...proportion(a.n, a.x) },
    b: { label: labels[1], ...proportion(b.n, b.x) },
    difference: { value: finite(d.difference), lower: finite(d.lower), upper: finite(d.upper), method: say("ba.differenceMethod", { method: d.method }) },
    test,
    notes,
  };
  if (q.stratifyBy) out.stratified = stratified(db, q.stratifyBy, sc, rowsA, rowsB);
  return out;
}

function stratified(db: Db, key: NonNullable<Query["stratifyBy"]>, sc: Scanned, rowsA: number[], rowsB: number[]): Stratified {
  const st = stratifier(db, sc.facts, key);
  const byA = countByLevel(rowsA, sc.affected, st.of);
  const byB = countByLevel(rowsB, sc.affected, st.of);
  const levels = [...new Set([...byA.keys(), ...byB.keys()])].sort(naturalOrder);
  const none = { n: 0, x: 0 };
  // The first group of each 2×2 is B and the second A, so every odds ratio is B against A (A the reference).
  const tables: Stratum2x2[] = levels.map((label) => {
    const sa = byA.get(label) ?? none;
    const sb = byB.get(label) ?? none;
    return { label, a: sb.x, b: sb.n - sb.x, c: sa.x, d: sa.n - sa.x };
  });
  const mh = mantelHaenszel(tables);
  const count = (c: { n: number; x: number }) => ({ slabs: c.n, affected: c.x, rate: c.n > 0 ? c.x / c.n : null });
  const strata = levels.map((label, k) => {
    const sa = byA.get(label) ?? none;
    const sb = byB.get(label) ?? none;
    const diff = sa.n > 0 && sb.n > 0 ? differenceOfProportions(sb.x, sb.n, sa.x, sa.n) : null;
    const or = mh.strata[k]!;
    return {
      label,
      a: count(sa),
      b: count(sb),
      difference: { value: diff ? finite(diff.difference) : null, lower: diff ? finite(diff.lower) : null, upper: diff ? finite(diff.upper) : null },
      oddsRatio: finite(or.oddsRatio ?? NaN),
      ciLower: finite(or.ciLower ?? NaN),
      ciUpper: finite(or.ciUpper ?? NaN),
      zeroCellCorrection: or.zeroCellCorrection,
      reason: or.reason,
    };
  });
  const total = tables.reduce((t, s) => ({ label: "all", a: t.a + s.a, b: t.b + s.b, c: t.c + s.c, d: t.d + s.d }), { label: "all", a: 0, b: 0, c: 0, d: 0 });
  const crude = stratumOddsRatio(total);

  // Direct standardisation on the strata both groups hold: their slabs of A and B together are the mix.
  const common = levels.filter((l) => (byA.get(l)?.n ?? 0) > 0 && (byB.get(l)?.n ?? 0) > 0);
  const leftOut = levels
    .filter((l) => !common.includes(l))
    .map((l) => ((byA.get(l)?.n ?? 0) > 0 ? { label: l, group: "A" as const, slabs: byA.get(l)!.n } : { label: l, group: "B" as const, slabs: byB.get(l)!.n }));
  const strataOf = (m: Map<string, { n: number; x: number }>): RateStratum[] => common.map((l) => ({ label: l, n: m.get(l)!.n, x: m.get(l)!.x }));
  const mixTotal = common.reduce((t, l) => t + byA.get(l)!.n + byB.get(l)!.n, 0);
  const referenceMix = common.map((l) => ({ label: l, slabs: byA.get(l)!.n + byB.get(l)!.n, share: (byA.get(l)!.n + byB.get(l)!.n) / mixTotal }));
  const std =
    common.length > 0
      ? differenceOfStandardisedRates(
          strataOf(byA),
          strataOf(byB),
          referenceMix.map((r) => ({ label: r.label, weight: r.slabs })),
        )
      : {
          rateA: null,
          rateB: null,
          difference: null,
          ciLower: null,
          ciUpper: null,
          reason: say("ba.noCommonMix", { label: lowerOf(st.label) }),
          notes: [],
          method: "",
        };
  const label = lowerOf(st.label);
  const notes = [...mh.notes, ...std.notes];
  if (leftOut.length) {
    notes.push(
      say("ba.leftOut", { list: leftOut.map((l) => say("ba.leftOutItem", { label: named(l.label), count: l.slabs, group: l.group })).join(", "), label }),
    );
  }
  const cie = changeInEstimate(crude.oddsRatio, mh.oddsRatio);
  let sentence: string | null = null;
  if (cie.differs && mh.oddsRatio !== null && crude.oddsRatio !== null) {
    sentence =
      Math.abs(Math.log(mh.oddsRatio)) < Math.abs(Math.log(crude.oddsRatio)) / 2
        ? say("ba.mostGoes", { label, mh: fmt(mh.oddsRatio), crude: fmt(crude.oddsRatio) })
        : say("ba.mixDiffers", { label, mh: fmt(mh.oddsRatio), crude: fmt(crude.oddsRatio) });
  }
  return {
    by: { key: st.key, label: st.label },
    reference: "A",
    strata,
    crude: { oddsRatio: finite(crude.oddsRatio ?? NaN), ciLower: finite(crude.ciLower ?? NaN), ciUpper: finite(crude.ciUpper ?? NaN) },
    mantelHaenszel: {
      oddsRatio: mh.oddsRatio,
      ciLower: mh.ciLower,
      ciUpper: mh.ciUpper,
      chi2: mh.cmh.statistic,
      p: mh.cmh.p,
      informativeStrata: mh.informativeStrata,
      continuityCorrection: mh.cmh.continuityCorrection,
      reason: mh.reason ?? mh.cmh.reason,
    },
    breslowDay: {
      chi2: mh.breslowDay.statistic,
      df: mh.breslowDay.df,
      p: mh.breslowDay.p,
      uncorrected: mh.breslowDay.uncorrected,
      tarone: mh.breslowDay.tarone,
      smallExpected: mh.breslowDay.smallExpected,
      reason: mh.breslowDay.reason,
    },
    standardised: {
      rateA: std.rateA,
      rateB: std.rateB,
      difference: std.difference,
      ciLower: std.ciLower,
      ciUpper: std.ciUpper,
      reason: std.reason || null,
      reference: say("ba.reference", { label }),
      referenceMix,
      leftOut,
    },
    changeInEstimate: { relativeChange: cie.relativeChange, differs: cie.differs, sentence },
    methods: {
      reading: say("ba.method.reading", { label }),
      mantelHaenszel: mh.method,
      standardised: say("ba.method.standardised", { method: std.method || say("ba.method.direct"), label }),
      changeInEstimate: say("ba.method.changeInEstimate"),
    },
    notes,
  };
}

const fmt = (x: number) => dec(x, x >= 10 ? 1 : 2);
/** A stratifying key's name inside a sentence: English lower-case as always, another language its own word. */
const lowerOf = (label: string) => (currentLanguage() === "en" ? label.toLowerCase() : named(label));
