/** Two periods, or two ranges of one condition, compared. */
import type { z } from "zod";
import type { BeforeAfter, beforeAfterQuerySchema } from "@shared/api/reports";
import type { Db } from "../../db/client";
import { parseDateBound } from "../../lib/dates";
import { badRequest } from "../../lib/http-error";
import { chiSquareIndependence, fisherExact2x2 } from "../../stats/contingency";
import { differenceOfProportions } from "../../stats/proportions";
import { buildScope, finite, proportion, scan, variableSpec, type Scanned } from "./scope";

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
