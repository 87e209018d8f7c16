/**
 * The level of a categorical key (grade family, grade, strand, caster, transition, position in the
 * sequence) for each slab of the facts, in the words the screens use, for stratified comparisons and
 * standardised rates.
 */
import { CATEGORICAL_LABELS, type CategoricalKey } from "@shared/variables";
import type { Db } from "../../db/client";
import { directlyStandardisedRate } from "../../stats/standardise";
import type { SlabFacts } from "../report-cache";
import { seqBucket } from "./adjusted";
import { byPeriodAndStratum, entryOf, type Period } from "./periods";
import type { Scanned } from "./scope";
import { say } from "../../lib/words";

export interface Stratifier {
  key: CategoricalKey;
  label: string;
  /** The level of slab row i. */
  of: (i: number) => string;
}

export function stratifier(db: Db, f: SlabFacts, key: CategoricalKey): Stratifier {
  const sqlite = db.$client;
  const names = (sql: string) => new Map((sqlite.prepare(sql).raw().all() as [number, string][]).map(([id, name]) => [id, name]));
  const lookup = (m: Map<number, string>, col: ArrayLike<number>) => (i: number) => m.get(col[i]!) ?? `#${col[i]}`;
  let of: (i: number) => string;
  switch (key) {
    case "grade_family":
      of = lookup(names("select id, code from grade_families"), f.familyId);
      break;
    case "grade":
      of = lookup(names("select id, code from grades"), f.gradeId);
      break;
    case "strand":
      of = lookup(names("select s.id, c.code || ' strand ' || s.strand_no from strands s join casters c on c.id = s.caster_id"), f.strandId);
      break;
    case "caster":
      of = lookup(names("select id, code from casters"), f.casterId);
      break;
    case "transition":
      of = (i) => (f.transition[i] ? "transition" : "not transition");
      break;
    case "sequence_position":
      of = (i) => seqBucket(f.sequencePosition[i]!);
      break;
  }
  return { key, label: CATEGORICAL_LABELS[key], of };
}

/** Slabs and affected slabs per level over the given rows (the counter looked up again only when the level changes). */
export function countByLevel(rows: Iterable<number>, affected: Uint8Array, of: (i: number) => string) {
  const m = new Map<string, { n: number; x: number }>();
  let lastK: string | null = null;
  let c = { n: 0, x: 0 };
  for (const i of rows) {
    const k = of(i);
    if (k !== lastK) {
      lastK = k;
      c = entryOf(m, k, () => ({ n: 0, x: 0 }));
    }
    c.n++;
    c.x += affected[i]!;
  }
  return m;
}

export const naturalOrder = (a: string, b: string) => a.localeCompare(b, "en", { numeric: true });

/**
 * Each period's share of slabs affected directly standardised to the grade-family mix of every slab
 * in the filters (the reference), with its interval; null with the reason where a period lacks a
 * family of the reference mix.
 */
export function standardisedByPeriod(db: Db, s: Scanned, period: Period) {
  const st = stratifier(db, s.facts, "grade_family");
  const all = countByLevel(s.rows, s.affected, st.of);
  const total = [...all.values()].reduce((t, c) => t + c.n, 0);
  const referenceMix = [...all.entries()].sort(([x], [y]) => naturalOrder(x, y)).map(([label, c]) => ({ label, slabs: c.n, share: c.n / total }));
  const reference = referenceMix.map((r) => ({ label: r.label, weight: r.slabs }));
  const rates = new Map<string, { rate: number | null; ciLower: number | null; ciUpper: number | null; reason: string | null }>();
  const notes = new Set<string>();
  let undefinedPeriods = 0;
  for (const [label, m] of byPeriodAndStratum(s, period, st.of)) {
    const r = directlyStandardisedRate(
      [...m.entries()].map(([l, c]) => ({ label: l, n: c.n, x: c.x })),
      reference,
    );
    if (r.rate === null) undefinedPeriods++;
    for (const n of r.notes) notes.add(n);
    rates.set(label, {
      rate: r.rate,
      ciLower: r.ciLower,
      ciUpper: r.ciUpper,
      reason: r.reason ? say(`strata.periodReason.${period}`, { why: r.reason }) : null,
    });
  }
  const out: string[] = [];
  if (undefinedPeriods > 0) out.push(say(`strata.undefined_${period}`, { count: undefinedPeriods }));
  if (notes.size > 0) out.push(say("strata.certain"));
  return {
    rates,
    notes: out,
    standardisation: {
      by: "grade_family" as const,
      label: st.label,
      reference: say("strata.reference"),
      referenceMix,
      method: say("strata.method"),
    },
  };
}
