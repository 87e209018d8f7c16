/** The p-chart of the affected share by day or week. */
import type { z } from "zod";
import type { ControlChart, controlChartQuerySchema } from "@shared/api/reports";
import type { Db } from "../../db/client";
import { pChart } from "../../stats/control";
import { byPeriod } from "./periods";
import { buildScope, finite, scan } from "./scope";

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
