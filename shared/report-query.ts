import { REPORT_KINDS } from "./api/reports";

/**
 * A report's question as it travels in the address and to the API. The screen's query string is the
 * API's query string, and the one saved with a report: a shared link, a saved report, the screen and
 * its Excel export all ask the server the same question. Here, not in the client, so that the server
 * can name a screen's first data request in the page it answers (server/lib/screen-data.ts) with
 * exactly the address the screen will ask.
 *
 * Values are strings; lists are comma-joined, as the API reads them (`grade=LV-ST32,LV-ST36`).
 */
export type ReportKind = (typeof REPORT_KINDS)[number];
export type ReportParams = Record<string, string>;

/** The filters every report takes (shared/api/reports.ts, reportFiltersSchema), in the order they are written. */
export const FILTER_KEYS = [
  "from",
  "to",
  "caster",
  "strand",
  "grade",
  "family",
  "defectType",
  "category",
  "stage",
  "minSeverity",
  "cause",
  "transition",
  "riskBand",
] as const;
export type FilterKey = (typeof FILTER_KEYS)[number];

export interface ReportQuerySpec {
  /** The report's own parameters with the value used when the address leaves them out. */
  defaults: ReportParams;
  /** Parameters of its own that have no default (e.g. the two periods of a comparison). */
  optional?: string[];
}

export const REPORT_QUERIES: Record<ReportKind, ReportQuerySpec> = {
  // standardise=grade_family: each period's rate directly standardised to the grade-family mix, beside the crude one.
  overview: { defaults: { period: "week" }, optional: ["standardise"] },
  // Off until chosen: adjustFor (terms of the adjusted odds ratio), stratifyBy (one curve per group), se (their standard errors).
  "rate-by-variable": { defaults: { variable: "casting_speed_m_min", bins: "10", binning: "equal", minN: "30" }, optional: ["adjustFor", "stratifyBy", "se"] },
  // The API takes minN here but does not use it yet (its few-slabs mark is fixed): no setting that changes nothing.
  // adjustFor: the API's own default (grade family) written out, so the address says the whole question; "none" for crude only.
  screening: { defaults: { adjustFor: "grade_family" }, optional: ["se"] },
  adjusted: { defaults: { variables: "casting_speed_m_min", adjustFor: "grade_family", se: "cluster", per: "step" } },
  "process-window": { defaults: { x: "casting_speed_m_min", y: "embr_current_a", xBins: "6", yBins: "6", binning: "quantile", minN: "30" } },
  "control-chart": { defaults: { period: "day", chart: "p", rules: "on" }, optional: ["baselineFrom", "baselineTo", "standardise"] },
  "before-after": { defaults: { mode: "periods" }, optional: ["aFrom", "aTo", "bFrom", "bTo", "variable", "aMin", "aMax", "bMin", "bMax", "stratifyBy"] },
  "slab-positions": { defaults: { alongBins: "10", acrossBins: "5" } },
  "cause-pareto": { defaults: { minConfidence: "suspected" } },
};

export const isReportKind = (k: string): k is ReportKind => (REPORT_KINDS as readonly string[]).includes(k);

const keysOf = (kind: ReportKind) => {
  const q = REPORT_QUERIES[kind];
  return [...FILTER_KEYS, ...Object.keys(q.defaults), ...(q.optional ?? [])];
};

/** The report's parameters from the address: known keys only, trimmed, defaults filled in. */
export function readReportParams(kind: ReportKind, sp: URLSearchParams): ReportParams {
  const { defaults } = REPORT_QUERIES[kind];
  const out: ReportParams = {};
  for (const k of keysOf(kind)) {
    const v = sp.get(k)?.trim();
    if (v) out[k] = v.slice(0, 400);
    else if (defaults[k] !== undefined) out[k] = defaults[k];
  }
  return out;
}

/** The canonical query string (a stable key order, empty values left out). */
export function reportQueryString(kind: ReportKind, params: ReportParams): string {
  const sp = new URLSearchParams();
  for (const k of keysOf(kind)) {
    const v = params[k];
    if (v !== undefined && v !== "") sp.set(k, v);
  }
  return sp.toString();
}
