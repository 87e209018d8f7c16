/**
 * Reports as Excel workbooks (exceljs). The workbook is built from the very object the API returns
 * for the same query string, so its numbers are the API's numbers. Every workbook opens with a
 * "Parameters" sheet (the filters, who and when, the methods and the cautions); each table gets a
 * sheet with units in the headers, number formats, a frozen header row and an autofilter.
 */
import ExcelJS from "exceljs";
import { guardSheet } from "../lib/cells";
import type { CausePareto } from "@shared/api/causes";
import type { BeforeAfter, ControlChart, Overview, ProcessWindow, RateByVariable, Screening, SlabPositions } from "@shared/api/reports";

type Col = { header: string; key: string; width?: number; numFmt?: string };
type Sheet = { name: string; columns: Col[]; rows: Record<string, unknown>[] };

const PCT = "0.00%";
const P = "0.0000";
const N = "#,##0";
const D2 = "0.00";
const D3 = "0.000";

export const CAUTIONS = [
  "A correlation in a report is not a cause; grade mix confounds almost everything.",
  "Changing casting speed, brake current, SEN depth or superheat goes through the plant's own change procedure and its licensed metallurgists: such changes can cause breakouts. Defer to local codes and licensed practice.",
];

function tablesFor(kind: string, r: unknown): Sheet[] {
  switch (kind) {
    case "rate-by-variable": {
      const x = r as RateByVariable;
      const u = x.variable.unit;
      return [
        {
          name: "Bins",
          columns: [
            { header: `From (${u})`, key: "lower", numFmt: D3 },
            { header: `To (${u})`, key: "upper", numFmt: D3 },
            { header: "Slabs", key: "slabs", numFmt: N },
            { header: "Affected slabs", key: "affected", numFmt: N },
            { header: "Rate", key: "rate", numFmt: PCT },
            { header: "95 % CI lower", key: "ciLower", numFmt: PCT },
            { header: "95 % CI upper", key: "ciUpper", numFmt: PCT },
          ],
          rows: x.bins,
        },
        {
          name: "Tests",
          columns: [
            { header: "Test", key: "test", width: 34 },
            { header: "Statistic", key: "statistic", numFmt: "0.0000" },
            { header: "p (two-sided)", key: "p", numFmt: P },
            { header: "Method", key: "method", width: 90 },
          ],
          rows: [
            { test: "Spearman ρ", statistic: x.spearman.rho, p: x.spearman.p, method: x.methods.spearman },
            { test: "Point-biserial r", statistic: x.pointBiserial.r, p: x.pointBiserial.p, method: x.methods.pointBiserial },
            { test: `Logistic slope (per ${u})`, statistic: x.logistic.slope, p: x.logistic.p, method: x.methods.logistic },
            { test: "Logistic intercept", statistic: x.logistic.intercept, p: null, method: "" },
            { test: `Odds ratio per ${u}`, statistic: x.logistic.oddsRatio, p: null, method: `95 % CI ${x.logistic.oddsRatioCiLower} – ${x.logistic.oddsRatioCiUpper}` },
            { test: "Mann–Whitney U", statistic: x.mannWhitney.u, p: x.mannWhitney.p, method: x.methods.mannWhitney },
          ],
        },
        {
          name: "Distribution",
          columns: [
            { header: "Slabs", key: "group" },
            { header: "n", key: "n", numFmt: N },
            { header: `Min (${u})`, key: "min", numFmt: D3 },
            { header: `Q1 (${u})`, key: "q1", numFmt: D3 },
            { header: `Median (${u})`, key: "median", numFmt: D3 },
            { header: `Q3 (${u})`, key: "q3", numFmt: D3 },
            { header: `Max (${u})`, key: "max", numFmt: D3 },
            { header: `Mean (${u})`, key: "mean", numFmt: D3 },
          ],
          rows: [
            { group: "affected", ...x.distribution.affected },
            { group: "sound", ...x.distribution.sound },
          ],
        },
      ];
    }
    case "screening": {
      const x = r as Screening;
      return [
        {
          name: "Screening",
          columns: [
            { header: "Variable", key: "label", width: 30 },
            { header: "Key", key: "key", width: 22 },
            { header: "Kind", key: "kind" },
            { header: "n (slabs)", key: "n", numFmt: N },
            { header: "Statistic", key: "statistic", numFmt: "0.000" },
            { header: "df", key: "df", numFmt: "0.0" },
            { header: "p", key: "p", numFmt: "0.00E+00" },
            { header: "p adjusted (BH)", key: "pAdjusted", numFmt: "0.00E+00" },
            { header: "Mean affected", key: "meanAffected", numFmt: "0.000" },
            { header: "Mean sound", key: "meanSound", numFmt: "0.000" },
            { header: "Few slabs", key: "fewSlabs" },
            { header: "Method", key: "method", width: 60 },
          ],
          rows: x.variables.map((v) => ({ ...v, fewSlabs: v.fewSlabs ? "yes" : "" })),
        },
      ];
    }
    case "control-chart": {
      const x = r as ControlChart;
      return [
        {
          name: "p-chart",
          columns: [
            { header: x.period === "day" ? "Day" : "Week", key: "period" },
            { header: "Slabs", key: "slabs", numFmt: N },
            { header: "Affected slabs", key: "affected", numFmt: N },
            { header: "p", key: "p", numFmt: PCT },
            { header: "UCL", key: "ucl", numFmt: PCT },
            { header: "LCL", key: "lcl", numFmt: PCT },
            { header: "Out of control", key: "out" },
          ],
          rows: x.points.map((p) => ({ ...p, out: p.outOfControl ? "yes" : "" })),
        },
      ];
    }
    case "overview": {
      const x = r as Overview;
      const rate = [
        { header: "Slabs", key: "slabs", numFmt: N },
        { header: "Affected slabs", key: "affected", numFmt: N },
        { header: "Rate", key: "rate", numFmt: PCT },
        { header: "95 % CI lower", key: "ciLower", numFmt: PCT },
        { header: "95 % CI upper", key: "ciUpper", numFmt: PCT },
      ];
      return [
        {
          name: "By period",
          columns: [
            { header: "Period", key: "period" },
            ...rate,
            { header: "Defects", key: "defects", numFmt: N },
            { header: "Tonnes (t)", key: "tonnes", numFmt: "#,##0.0" },
            { header: "Defects per 100 slabs", key: "per100Slabs", numFmt: D2 },
            { header: "Defects per 1000 t", key: "per1000t", numFmt: D2 },
          ],
          rows: x.periods,
        },
        {
          name: "Pareto",
          columns: [
            { header: "Type", key: "code" },
            { header: "Name", key: "name", width: 40 },
            { header: "Defects", key: "defects", numFmt: N },
            { header: "Slabs affected", key: "slabsAffected", numFmt: N },
            { header: "Share", key: "share", numFmt: PCT },
            { header: "Cumulative share", key: "cumulativeShare", numFmt: PCT },
          ],
          rows: x.pareto,
        },
        { name: "By grade", columns: [{ header: "Grade", key: "grade" }, { header: "Family", key: "family" }, ...rate], rows: x.byGrade },
        { name: "By strand", columns: [{ header: "Caster", key: "caster" }, { header: "Strand", key: "strand" }, ...rate], rows: x.byStrand },
      ];
    }
    case "process-window": {
      const x = r as ProcessWindow;
      return [
        {
          name: "Process window",
          columns: [
            { header: `${x.x.label} from (${x.x.unit})`, key: "xLower", numFmt: D3 },
            { header: `${x.x.label} to (${x.x.unit})`, key: "xUpper", numFmt: D3 },
            { header: `${x.y.label} from (${x.y.unit})`, key: "yLower", numFmt: D3 },
            { header: `${x.y.label} to (${x.y.unit})`, key: "yUpper", numFmt: D3 },
            { header: "Slabs", key: "slabs", numFmt: N },
            { header: "Affected slabs", key: "affected", numFmt: N },
            { header: "Rate", key: "rate", numFmt: PCT },
            { header: "95 % CI lower", key: "ciLower", numFmt: PCT },
            { header: "95 % CI upper", key: "ciUpper", numFmt: PCT },
            { header: `Under ${x.minN} slabs`, key: "sparse" },
          ],
          rows: x.cells.map((c) => ({ ...c, sparse: c.sparse ? "yes" : "" })),
        },
      ];
    }
    case "before-after": {
      const x = r as BeforeAfter;
      return [
        {
          name: "Before and after",
          columns: [
            { header: "Group", key: "group" },
            { header: "Label", key: "label", width: 36 },
            { header: "Slabs", key: "slabs", numFmt: N },
            { header: "Affected slabs", key: "affected", numFmt: N },
            { header: "Rate", key: "rate", numFmt: PCT },
            { header: "95 % CI lower", key: "ciLower", numFmt: PCT },
            { header: "95 % CI upper", key: "ciUpper", numFmt: PCT },
          ],
          rows: [
            { group: "A", ...x.a },
            { group: "B", ...x.b },
          ],
        },
        {
          name: "Difference",
          columns: [
            { header: "B − A", key: "value", numFmt: PCT },
            { header: "95 % CI lower", key: "lower", numFmt: PCT },
            { header: "95 % CI upper", key: "upper", numFmt: PCT },
            { header: "Test", key: "test" },
            { header: "p (two-sided)", key: "p", numFmt: P },
            { header: "Method", key: "method", width: 80 },
          ],
          rows: [{ ...x.difference, test: x.test.name, p: x.test.p, method: `${x.difference.method}; ${x.test.method}` }],
        },
      ];
    }
    case "slab-positions": {
      const x = r as SlabPositions;
      const along = x.alongEdges.slice(0, -1).map((lo, i) => `${Math.round(lo * 100)}–${Math.round(x.alongEdges[i + 1]! * 100)} %`);
      return [
        { name: "By face", columns: [{ header: "Face", key: "face" }, { header: "Defects", key: "defects", numFmt: N }], rows: x.byFace },
        {
          name: "Along the slab",
          columns: [{ header: "Face", key: "face" }, ...along.map((a, i) => ({ header: `${a} of length from head`, key: `a${i}`, numFmt: N }))],
          rows: x.grid.map((g) => ({ face: g.face, ...Object.fromEntries(g.along.map((v, i) => [`a${i}`, v])) })),
        },
      ];
    }
    case "cause-pareto": {
      const x = r as CausePareto;
      return [
        {
          name: "Causes",
          columns: [
            { header: "Cause tag", key: "code", width: 26 },
            { header: "Name", key: "name", width: 32 },
            { header: "Group", key: "group" },
            { header: "Defects", key: "defects", numFmt: N },
            { header: "Slabs", key: "slabs", numFmt: N },
            { header: "Suspected", key: "suspected", numFmt: N },
            { header: "Probable", key: "probable", numFmt: N },
            { header: "Confirmed", key: "confirmed", numFmt: N },
            { header: "Share of taggings", key: "share", numFmt: PCT },
            { header: "Cumulative share", key: "cumulative", numFmt: PCT },
          ],
          rows: x.rows,
        },
        {
          name: "Counts",
          columns: [
            { header: "Defects passing the filters (n)", key: "defects", numFmt: N },
            { header: "Tagged", key: "tagged", numFmt: N },
            { header: "Without a cause", key: "untagged", numFmt: N },
          ],
          rows: [x],
        },
      ];
    }
    default:
      return [];
  }
}

export async function reportWorkbook(kind: string, query: string, result: unknown, by: string, method: string[] = []): Promise<Buffer> {
  const wb = new ExcelJS.Workbook();
  wb.creator = "Strandsight";
  wb.created = new Date();
  const params = wb.addWorksheet("Parameters");
  params.columns = [
    { header: "Parameter", key: "k", width: 28 },
    { header: "Value", key: "v", width: 100 },
  ];
  params.getRow(1).font = { bold: true };
  params.addRow({ k: "Report", v: kind });
  params.addRow({ k: "Generated", v: new Date().toISOString() });
  params.addRow({ k: "By", v: by });
  const search = new URLSearchParams(query);
  if ([...search.keys()].length === 0) params.addRow({ k: "Filters", v: "none (all slabs on record)" });
  for (const [k, v] of search) params.addRow({ k, v });
  for (const m of method) params.addRow({ k: "Method", v: m });
  for (const c of CAUTIONS) params.addRow({ k: "Caution", v: c });
  params.views = [{ state: "frozen", ySplit: 1 }];

  for (const t of tablesFor(kind, result)) {
    const ws = wb.addWorksheet(t.name.slice(0, 31), { views: [{ state: "frozen", ySplit: 1 }] });
    ws.columns = t.columns.map((c) => ({ header: c.header, key: c.key, width: c.width ?? Math.max(12, c.header.length + 2), style: c.numFmt ? { numFmt: c.numFmt } : {} }));
    ws.getRow(1).font = { bold: true };
    for (const row of t.rows) ws.addRow(Object.fromEntries(t.columns.map((c) => [c.key, (row as Record<string, unknown>)[c.key] ?? null])));
    ws.autoFilter = { from: { row: 1, column: 1 }, to: { row: 1, column: t.columns.length } };
  }
  // Filter values and names typed by users stay text, never formulas (OWASP, CSV injection).
  wb.eachSheet((ws) => void guardSheet(ws));
  return Buffer.from(await wb.xlsx.writeBuffer());
}
