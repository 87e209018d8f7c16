import { termLabel } from "@shared/api/reports";
import { FILTER_KEYS, type ReportKind, type ReportParams } from "@shared/report-query";

// The question's keys, defaults and canonical query string live in shared/report-query.ts (the server
// names a screen's first request with them); the screens' words about each report live here.
export { FILTER_KEYS, isReportKind, readReportParams, reportQueryString, type FilterKey, type ReportKind, type ReportParams } from "@shared/report-query";

export interface ReportSpec {
  kind: ReportKind;
  title: string;
  /** One line on the reports home and under the title. */
  summary: string;
}

/** What the screens say about each report (its question's keys and defaults: shared/report-query.ts). */
export const REPORTS: ReportSpec[] = [
  {
    kind: "overview",
    title: "Overview",
    summary:
      "Share of slabs affected by period with its interval, defects per 100 slabs and per 1000 t, a Pareto of defect types, rates by grade and by strand.",
  },
  {
    kind: "rate-by-variable",
    title: "Rate against a variable",
    summary:
      "Binned rates with Wilson intervals against one casting condition; Spearman, logistic odds ratio and Mann–Whitney between affected and sound slabs; the odds ratio adjusted for the grade mix and the rates split by grade family, strand or another group on request.",
  },
  {
    kind: "screening",
    title: "Screening",
    summary:
      "Every condition ranked by its association with the defect adjusted for the grade family (or what you choose): odds ratios per interquartile range, crude beside adjusted, p-values adjusted by Benjamini–Hochberg.",
  },
  {
    kind: "adjusted",
    title: "Adjusted model",
    summary:
      "Is it the condition, or the grade mix? Crude and adjusted odds ratios side by side for the conditions you examine, adjusted for grade family or anything else, with heat-clustered intervals and a forest plot.",
  },
  {
    kind: "process-window",
    title: "Process window",
    summary: "The rate over a grid of two conditions, with the count of slabs in every cell; cells with too few slabs are greyed.",
  },
  {
    kind: "control-chart",
    title: "Control chart",
    summary:
      "p-chart, Laney p′ chart or u-chart by day or week: limits from a baseline period applied to the later ones, Western Electric run rules, out-of-control periods marked.",
  },
  {
    kind: "before-after",
    title: "Before and after",
    summary:
      "Two periods, or two ranges of one condition: the difference in rates with its interval, and Fisher's or the chi-square test; compared within each grade family (Mantel–Haenszel) on request.",
  },
  {
    kind: "slab-positions",
    title: "Where on the slab",
    summary: "Where the defects sit: by face, along the length from the head end and across the width, drawn on the slab's unrolled faces.",
  },
  {
    kind: "cause-pareto",
    title: "Cause Pareto",
    summary:
      "The cause tags of the defects passing the filters, largest first, with the cumulative share, the confidence of each tagging and how many defects carry no cause yet.",
  },
];

export const reportSpec = (kind: ReportKind): ReportSpec => REPORTS.find((r) => r.kind === kind)!;
export const reportPath = (kind: ReportKind, query = "") => `/reports/${kind}${query ? `?${query}` : ""}`;

export const listOf = (v: string | undefined): string[] =>
  v
    ? v
        .split(",")
        .map((s) => s.trim())
        .filter(Boolean)
    : [];
export const joinList = (items: string[]): string | undefined => (items.length ? items.join(",") : undefined);

/** Whether any filter narrows the slabs or the defects. */
export const anyFilter = (p: ReportParams) => FILTER_KEYS.some((k) => Boolean(p[k]));

/** The filters in a few words, for a saved report's suggested name and the saved-reports list. */
export function describeFilters(p: ReportParams): string {
  const parts: string[] = [];
  if (p.defectType) parts.push(listOf(p.defectType).join("+"));
  if (p.category) parts.push(`every ${listOf(p.category).join("+")}`);
  if (p.grade) parts.push(listOf(p.grade).join("+"));
  if (p.family) parts.push(`${listOf(p.family).join("+")} grades`);
  if (p.caster || p.strand) parts.push([p.caster, p.strand ? `strand ${p.strand}` : ""].filter(Boolean).join(" "));
  if (p.from || p.to) parts.push(`${p.from ?? "…"} to ${p.to ?? "…"}`);
  if (p.stage) parts.push(p.stage.replace(/_/g, " "));
  if (p.minSeverity) parts.push(`severity ≥ ${p.minSeverity}`);
  if (p.transition) parts.push(p.transition === "yes" ? "transition slabs" : "no transition slabs");
  if (p.cause) parts.push(`cause ${p.cause}`);
  if (p.riskBand) parts.push(`${listOf(p.riskBand).join(" or ")} risk`);
  return parts.length ? parts.join(", ") : "all slabs, every defect type";
}

const varLabel = (k: string | undefined) => (k ? termLabel(k) : "");
/** A list of model terms in words: "casting speed, superheat"; "none" (or nothing) as `none`. */
const termsInWords = (v: string | undefined, none: string) => {
  const keys = listOf(v).filter((k) => k.toLowerCase() !== "none");
  return keys.length ? keys.map((k) => lowerFirstWord(termLabel(k))).join(", ") : none;
};
const lowerFirstWord = (s: string) => (/^[A-Z][a-z]/.test(s) ? s[0]!.toLowerCase() + s.slice(1) : s);
const CHART_WORDS: Record<string, string> = { p: "p-chart", laney: "Laney p′ chart", u: "u-chart" };

/** The report's own settings in a few words: "Casting speed, 8 equal-width bins". */
export function describeSettings(kind: ReportKind, p: ReportParams): string {
  switch (kind) {
    case "overview":
      return `by ${p.period === "week" ? "ISO week" : p.period}${p.standardise ? ", standardised to the grade mix" : ""}`;
    case "control-chart":
      return [
        `${CHART_WORDS[p.chart ?? "p"] ?? p.chart} by ${p.period === "week" ? "ISO week" : p.period}`,
        p.baselineFrom && p.baselineTo ? `baseline ${p.baselineFrom} to ${p.baselineTo}` : "",
        p.rules === "off" ? "run rules off" : "",
        p.standardise ? "standardised rates beside" : "",
      ]
        .filter(Boolean)
        .join(", ");
    case "rate-by-variable":
      return [
        `${varLabel(p.variable)}, ${p.bins} ${p.binning === "quantile" ? "quantile" : "equal-width"} bins`,
        p.adjustFor && p.adjustFor !== "none" ? `adjusted for ${termsInWords(p.adjustFor, "nothing")}` : "",
        p.stratifyBy ? `split by ${lowerFirstWord(varLabel(p.stratifyBy))}` : "",
      ]
        .filter(Boolean)
        .join(", ");
    case "screening":
      return `adjusted for ${termsInWords(p.adjustFor, "nothing (crude only)")}`;
    case "adjusted":
      return `${termsInWords(p.variables, "—")} adjusted for ${termsInWords(p.adjustFor, "nothing")}${p.se === "model" ? ", model-based SEs" : ""}`;
    case "process-window":
      return `${varLabel(p.x)} × ${varLabel(p.y)}`;
    case "before-after":
      return `${p.mode === "variable" ? `${varLabel(p.variable)} ${p.aMin ?? "…"}–${p.aMax ?? "…"} against ${p.bMin ?? "…"}–${p.bMax ?? "…"}` : `${p.aFrom ?? "…"} to ${p.aTo ?? "…"} against ${p.bFrom ?? "…"} to ${p.bTo ?? "…"}`}${p.stratifyBy ? `, within each ${lowerFirstWord(varLabel(p.stratifyBy))}` : ""}`;
    case "slab-positions":
      return `${p.alongBins} bands along, ${p.acrossBins} across`;
    case "cause-pareto":
      return p.minConfidence === "suspected" || !p.minConfidence ? "every tagging" : `taggings ${p.minConfidence} or surer`;
    default:
      return "";
  }
}
