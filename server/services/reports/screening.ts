/** Every condition against the outcome, ranked by its Benjamini–Hochberg adjusted p. */
import type { z } from "zod";
import type { Screening, screeningQuerySchema } from "@shared/api/reports";
import { VARIABLES } from "@shared/variables";
import type { Db } from "../../db/client";
import { chiSquareIndependence } from "../../stats/contingency";
import { benjaminiHochberg } from "../../stats/multiple";
import { welchTTest } from "../../stats/regression";
import { buildScope, finite, scan, SMALL_AFFECTED } from "./scope";

export const seqBucket = (pos: number) => (pos <= 0 ? "unknown" : pos === 1 ? "1st heat" : pos <= 3 ? "2nd–3rd heat" : "4th heat on");

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
