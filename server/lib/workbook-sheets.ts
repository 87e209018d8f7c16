/**
 * The pieces every Strandsight workbook is built from (exceljs): the workbook itself, a table sheet
 * (bold frozen header, a width and a number format per column, numbers kept as numbers, an
 * autofilter) and a two-column sheet of items and values (the reports' Parameters, the heat
 * history's cover and summary). The reports' export and the heat history each choose their own
 * widths and filters through the options; the cells are theirs.
 */
import type ExcelJS from "exceljs";
import { guardSheet } from "./cells";
import { loadExcelJS } from "./lazy-packages";

/** Number formats the workbooks share. */
export const N0 = "#,##0";
export const D1 = "0.0";
export const D2 = "0.00";
export const D3 = "0.000";
export const D4 = "0.0000";
export const PCT = "0.00%";
export const DT = "yyyy-mm-dd hh:mm";

/** A table column: its header (with the unit), the row key it shows, its width and number format. */
export type SheetColumn = { header: string; key: string; width?: number; numFmt?: string };

export interface TableLook<C extends SheetColumn = SheetColumn> {
  /** The width of a column that names none, from its header. */
  width: (header: string) => number;
  /** The autofilter covers the header row only, or the header and every row written. */
  filter: "header" | "rows";
  /** The header row wraps its words and centres them vertically. */
  wrapHeader?: boolean;
  /** The value written for a row's value (missing values arrive as null). */
  cell?: (column: C, value: unknown) => unknown;
}

/** A new workbook signed by Strandsight. */
export async function newWorkbook(created: Date): Promise<ExcelJS.Workbook> {
  const wb = new (await loadExcelJS()).Workbook();
  wb.creator = "Strandsight";
  wb.created = created;
  return wb;
}

/** A sheet of rows under a bold, frozen header; a row's missing value is an empty cell, a number stays a number. */
export function addTableSheet<C extends SheetColumn>(
  wb: ExcelJS.Workbook,
  name: string,
  columns: C[],
  rows: Record<string, unknown>[],
  look: TableLook<C>,
): ExcelJS.Worksheet {
  // A sheet name has at most 31 characters.
  const ws = wb.addWorksheet(name.slice(0, 31), { views: [{ state: "frozen", ySplit: 1 }] });
  ws.columns = columns.map((c) => ({ header: c.header, key: c.key, width: c.width ?? look.width(c.header), style: c.numFmt ? { numFmt: c.numFmt } : {} }));
  ws.getRow(1).font = { bold: true };
  if (look.wrapHeader) ws.getRow(1).alignment = { vertical: "middle", wrapText: true };
  for (const row of rows) {
    ws.addRow(
      Object.fromEntries(
        columns.map((c) => {
          const v = row[c.key] ?? null;
          return [c.key, look.cell ? look.cell(c, v) : v];
        }),
      ),
    );
  }
  ws.autoFilter = { from: { row: 1, column: 1 }, to: { row: look.filter === "rows" ? Math.max(1, rows.length + 1) : 1, column: columns.length } };
  return ws;
}

export interface ItemSheet {
  ws: ExcelJS.Worksheet;
  /** One item and its value, in the value column's number format when one is given. */
  add: (item: string, value: unknown, numFmt?: string) => void;
}

/**
 * A sheet of items and their values under a bold, frozen header. `wrapValues`: the values sit left
 * and wrap (a long sentence stays readable in a narrow column).
 */
export function addItemSheet(
  wb: ExcelJS.Workbook,
  name: string,
  columns: { item: { header: string; width: number }; value: { header: string; width: number }; wrapValues?: boolean },
): ItemSheet {
  const ws = wb.addWorksheet(name, { views: [{ state: "frozen", ySplit: 1 }] });
  ws.columns = [
    { header: columns.item.header, key: "k", width: columns.item.width },
    { header: columns.value.header, key: "v", width: columns.value.width },
  ];
  ws.getRow(1).font = { bold: true };
  const add = (item: string, value: unknown, numFmt?: string) => {
    const row = ws.addRow({ k: item, v: value });
    if (numFmt) row.getCell(2).numFmt = numFmt;
    if (columns.wrapValues) row.getCell(2).alignment = { horizontal: "left", wrapText: true };
  };
  return { ws, add };
}

/** The finished file. Text a spreadsheet could take for a formula stays text (OWASP, CSV injection). */
export async function workbookBuffer(wb: ExcelJS.Workbook): Promise<Buffer> {
  wb.eachSheet((ws) => void guardSheet(ws));
  return Buffer.from(await wb.xlsx.writeBuffer());
}
