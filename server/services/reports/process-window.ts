/** The rate over a grid of two conditions, with thin cells flagged. */
import type { z } from "zod";
import type { ProcessWindow, processWindowQuerySchema } from "@shared/api/reports";
import type { Db } from "../../db/client";
import { badRequest, said } from "../../lib/http-error";
import { equalWidthEdges, quantileEdges } from "../../stats/binning";
import { buildScope, proportion, scan, variableGroups, variableSpec } from "./scope";
import { named, say } from "../../lib/words";
import { eachPiece } from "../report-cache";

export function processWindow(db: Db, q: z.output<typeof processWindowQuerySchema>): ProcessWindow {
  if (q.x === q.y) throw badRequest(said("reports.processWindowSameVariable"), { field: "y" });
  const sc = scan(db, buildScope(db, q));
  const sx = variableSpec(q.x);
  const sy = variableSpec(q.y);
  const edgesOf = (key: string, k: number) => {
    const { groups } = variableGroups(sc, key);
    return q.binning === "quantile" ? quantileEdges(groups, k) : equalWidthEdges(groups, k);
  };
  const ex = edgesOf(q.x, q.xBins);
  const ey = edgesOf(q.y, q.yBins);
  const axes = { x: { key: sx.key, label: sx.label, unit: sx.unit, edges: ex }, y: { key: sy.key, label: sy.label, unit: sy.unit, edges: ey } };
  // Without a value on an axis there are no bins: no cell, rather than cells with bounds that do not exist.
  const bare = [ex.length === 0 && sx, ey.length === 0 && sy].filter((v) => v !== false);
  if (bare.length) {
    const names = bare.map((v) => named(v.label));
    const notes = [say("window.noValue", { names: names.length === 2 ? say("window.or", { first: names[0]!, second: names[1]! }) : names[0]! })];
    return { ...axes, minN: q.minN, slabs: 0, affected: 0, cells: [], notes };
  }
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
  const scaleX = 10 ** (sx.digits + 1);
  const scaleY = 10 ** (sy.digits + 1);
  let slabs = 0;
  let affected = 0;
  // Two passes, each walking one column in pieces (a column in a file is never read whole): the
  // x bin of each slab in scope first (−1 without a value), then its cell with the y bin.
  const rows = sc.rows;
  const xBin = new Int8Array(rows.length);
  let u = 0;
  eachPiece(sc.facts, sx.key, (cx, from, to) => {
    for (; u < rows.length && rows[u]! < to; u++) {
      const vx = cx[rows[u]! - from]!;
      xBin[u] = vx !== vx ? -1 : bin(Math.round(vx * scaleX) / scaleX, ex);
    }
  });
  u = 0;
  eachPiece(sc.facts, sy.key, (cy, from, to) => {
    for (; u < rows.length && rows[u]! < to; u++) {
      const i = rows[u]!;
      const vy = cy[i - from]!;
      if (xBin[u]! < 0 || vy !== vy) continue;
      const c = xBin[u]! * ny + bin(Math.round(vy * scaleY) / scaleY, ey);
      n[c]!++;
      x[c]! += sc.affected[i]!;
      slabs++;
      affected += sc.affected[i]!;
    }
  });
  const cells: ProcessWindow["cells"] = [];
  for (let xi = 0; xi < nx; xi++) {
    for (let yi = 0; yi < ny; yi++) {
      const c = xi * ny + yi;
      cells.push({
        xi,
        yi,
        xLower: ex[xi]!,
        xUpper: ex[xi + 1] ?? ex[xi]!,
        yLower: ey[yi]!,
        yUpper: ey[yi + 1] ?? ey[yi]!,
        ...proportion(n[c]!, x[c]!),
        sparse: n[c]! < q.minN,
      });
    }
  }
  const notes: string[] = [];
  if (slabs === 0) notes.push(say("window.empty", { x: named(sx.label), y: named(sy.label) }));
  return { ...axes, minN: q.minN, slabs, affected, cells, notes };
}
