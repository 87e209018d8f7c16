/**
 * Risk bands of scored slabs, for the yard, the ranked list and the reports' risk-band filter. Kept
 * apart from risk.service.ts so the report scope can use it without importing the models' training.
 * A model's bands come from its test slabs: "high" at or above the risk of the top 10 %, "raised" the
 * next 20 % (risk.service.ts stores them with the version).
 */
import type Database from "better-sqlite3";
import type { RiskBand } from "@shared/api/risk";
import { badRequest, said } from "../../lib/http-error";

export const bandOf = (risk: number, high: number | null, raised: number | null): RiskBand =>
  high !== null && risk >= high ? "high" : raised !== null && risk >= raised ? "raised" : "usual";

const BAND_LEVEL: Record<RiskBand, number> = { high: 2, raised: 1, usual: 0 };

/**
 * SQL selecting the row ids of the slabs whose highest band under the chosen switched-on models is one
 * of `bands`. The models: those for the given defect types (a type's own model or its category's), or
 * every switched-on model when no type is given. Refused in words when no model is switched on, or
 * none for the given types.
 */
export function riskBandSlabsSql(sqlite: Database.Database, bands: string[], typeIds: number[] | null): string {
  const active = sqlite
    .prepare(`select m.id, m.target_kind as kind, m.target_code as code from risk_models m where m.active = 1 and m.status = 'ready'`)
    .all() as { id: number; kind: "type" | "category"; code: string }[];
  if (active.length === 0)
    throw badRequest(said("risk.noneSwitchedOn"), {
      field: "riskBand",
    });
  let chosen = active;
  if (typeIds && typeIds.length) {
    const types = sqlite
      .prepare(
        `select upper(t.code) as code, upper(c.code) as category from defect_types t join defect_categories c on c.id = t.category_id where t.id in (${typeIds.map((n) => Math.trunc(n)).join(",")})`,
      )
      .all() as { code: string; category: string }[];
    const matching = active.filter((m) => types.some((t) => (m.kind === "type" ? t.code === m.code.toUpperCase() : t.category === m.code.toUpperCase())));
    // Another defect's model would rank the slabs for the wrong question: refused, not swapped in silently.
    if (matching.length === 0)
      throw badRequest(types.length === 1 ? said("risk.noBandForType", { code: types[0]!.code }) : said("risk.noBandForTypes"), { field: "riskBand" });
    chosen = matching;
  }
  const levels = [...new Set(bands.map((b) => BAND_LEVEL[b as RiskBand]))].filter((n) => n !== undefined);
  return `select r.slab_id from slab_risks r join risk_models m on m.id = r.model_id where r.model_id in (${chosen.map((m) => m.id).join(",")})
    group by r.slab_id having max(case when m.band_high is not null and r.risk >= m.band_high then 2 when m.band_raised is not null and r.risk >= m.band_raised then 1 else 0 end) in (${levels.join(",")})`;
}
