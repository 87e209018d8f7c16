import { FILTER_KEYS, type ReportKind, type ReportParams } from "@shared/report-query";
import { i18n } from "@/i18n";
import { terms } from "@/i18n/terms";
import { formatLocale, lowerFirst } from "@/lib/format";

// The question's keys, defaults and canonical query string live in shared/report-query.ts (the server
// names a screen's first request with them); the screens' words about each report live here.
export { FILTER_KEYS, isReportKind, readReportParams, reportQueryString, type FilterKey, type ReportKind, type ReportParams } from "@shared/report-query";

export interface ReportSpec {
  kind: ReportKind;
  title: string;
  /** One line on the reports home and under the title. */
  summary: string;
}

/** A report's words, read in the language shown when asked for (the screens reading them redraw on a change). */
const spec = (kind: ReportKind): ReportSpec => ({
  kind,
  get title() {
    return i18n.t(`reports:kinds.${kind}.title`);
  },
  get summary() {
    return i18n.t(`reports:kinds.${kind}.summary`);
  },
});

/** What the screens say about each report (its question's keys and defaults: shared/report-query.ts). */
export const REPORTS: ReportSpec[] = (
  ["overview", "rate-by-variable", "screening", "adjusted", "process-window", "control-chart", "before-after", "slab-positions", "cause-pareto"] as const
).map(spec);

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

const tr = (key: string, options?: Record<string, unknown>) => i18n.t(`reports:describe.${key}`, options ?? {});

/**
 * A label inside a sentence: English lowers its first letter ("casting speed"; `lower` for another
 * rule); German nouns keep their capital.
 */
export const inSentence = (label: string, lower: (s: string) => string = lowerFirst) => (i18n.language === "de" ? label : lower(label));

/** "high or raised": a list of alternatives in the language shown. */
const orList = (items: string[]) => new Intl.ListFormat(formatLocale(), { type: "disjunction" }).format(items);

/** The filters in a few words, for a saved report's suggested name and the saved-reports list. */
export function describeFilters(p: ReportParams): string {
  const parts: string[] = [];
  if (p.defectType) parts.push(listOf(p.defectType).join("+"));
  if (p.category) parts.push(tr("everyCategory", { list: listOf(p.category).join("+") }));
  if (p.grade) parts.push(listOf(p.grade).join("+"));
  if (p.family) parts.push(tr("familyGrades", { list: listOf(p.family).join("+") }));
  if (p.caster || p.strand) parts.push([p.caster, p.strand ? tr("strand", { strand: p.strand }) : ""].filter(Boolean).join(" "));
  if (p.from || p.to) parts.push(tr("dates", { from: p.from ?? "…", to: p.to ?? "…" }));
  if (p.stage) parts.push(tr(`stages.${p.stage}`, { defaultValue: p.stage.replace(/_/g, " ") }));
  if (p.minSeverity) parts.push(tr("severity", { n: p.minSeverity }));
  if (p.transition) parts.push(p.transition === "yes" ? tr("transitionOnly") : tr("transitionNone"));
  if (p.cause) parts.push(tr("cause", { code: p.cause }));
  if (p.riskBand) parts.push(tr("risk", { bands: orList(listOf(p.riskBand).map((b) => tr(`bands.${b}`, { defaultValue: b }))) }));
  return parts.length ? parts.join(", ") : tr("everything");
}

const varLabel = (k: string | undefined) => (k ? terms().variable(k) : "");
/** A list of model terms in words: "casting speed, superheat"; "none" (or nothing) as `none`. */
const termsInWords = (v: string | undefined, none: string) => {
  const keys = listOf(v).filter((k) => k.toLowerCase() !== "none");
  return keys.length ? keys.map((k) => inSentence(varLabel(k))).join(", ") : none;
};
const periodWord = (period: string | undefined) => tr(`periods.${period}`, { defaultValue: period ?? "" });

/** The report's own settings in a few words: "Casting speed, 8 equal-width bins". */
export function describeSettings(kind: ReportKind, p: ReportParams): string {
  switch (kind) {
    case "overview":
      return tr(p.standardise ? "overviewStandardised" : "overview", { period: periodWord(p.period) });
    case "control-chart":
      return [
        tr("chartBy", { chart: tr(`charts.${p.chart ?? "p"}`, { defaultValue: p.chart }), period: periodWord(p.period) }),
        p.baselineFrom && p.baselineTo ? tr("baseline", { from: p.baselineFrom, to: p.baselineTo }) : "",
        p.rules === "off" ? tr("rulesOff") : "",
        p.standardise ? tr("standardisedBeside") : "",
      ]
        .filter(Boolean)
        .join(", ");
    case "rate-by-variable":
      return [
        tr(p.binning === "quantile" ? "binsQuantile" : "binsEqual", { variable: varLabel(p.variable), bins: p.bins }),
        p.adjustFor && p.adjustFor !== "none" ? tr("adjustedFor", { terms: termsInWords(p.adjustFor, tr("nothing")) }) : "",
        p.stratifyBy ? tr("splitBy", { by: inSentence(varLabel(p.stratifyBy)) }) : "",
      ]
        .filter(Boolean)
        .join(", ");
    case "screening":
      return tr("adjustedFor", { terms: termsInWords(p.adjustFor, tr("nothingCrude")) });
    case "adjusted":
      return tr(p.se === "model" ? "adjustedModelSe" : "adjusted", {
        variables: termsInWords(p.variables, "—"),
        terms: termsInWords(p.adjustFor, tr("nothing")),
      });
    case "process-window":
      return `${varLabel(p.x)} × ${varLabel(p.y)}`;
    case "before-after": {
      const compared =
        p.mode === "variable"
          ? tr("beforeAfterVariable", {
              variable: varLabel(p.variable),
              aMin: p.aMin ?? "…",
              aMax: p.aMax ?? "…",
              bMin: p.bMin ?? "…",
              bMax: p.bMax ?? "…",
            })
          : tr("beforeAfterPeriods", { aFrom: p.aFrom ?? "…", aTo: p.aTo ?? "…", bFrom: p.bFrom ?? "…", bTo: p.bTo ?? "…" });
      return p.stratifyBy ? tr("withinEach", { compared, by: inSentence(varLabel(p.stratifyBy)) }) : compared;
    }
    case "slab-positions":
      return tr("slabBands", { along: p.alongBins, across: p.acrossBins });
    case "cause-pareto":
      return p.minConfidence === "suspected" || !p.minConfidence
        ? tr("everyTagging")
        : tr("taggingsOrSurer", { level: tr(`confidence.${p.minConfidence}`, { defaultValue: p.minConfidence }) });
    default:
      return "";
  }
}
