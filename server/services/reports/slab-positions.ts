/** Where on the slab the defects sit: by face, along the length, across the width. */
import type { z } from "zod";
import type { SlabPositions, slabPositionsQuerySchema } from "@shared/api/reports";
import { FACES } from "@shared/domain";
import type { Db } from "../../db/client";
import { buildScope, whereSql } from "./scope";

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
  const grid = FACES.map((face) => ({
    face,
    along: new Array<number>(A).fill(0),
    across: new Array<number>(X).fill(0),
    cells: Array.from({ length: A }, () => new Array<number>(X).fill(0)),
  }));
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
