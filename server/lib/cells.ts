/**
 * Text bound for a spreadsheet. OWASP's guidance on CSV (formula) injection: a value that starts
 * with = + - @, a tab or a carriage return may be run as a formula by a spreadsheet. exceljs writes a
 * JavaScript string as a text cell (never as a formula), and for these values we also give the cell
 * the text number format "@", so that re-typing or converting the cell keeps it text.
 */
import type ExcelJS from "exceljs";

const RISKY = /^[=+\-@\t\r]/;

export const isRiskyText = (v: unknown): v is string => typeof v === "string" && RISKY.test(v);

/**
 * Marks every risky text cell of a worksheet as text (call after the rows are written). Line ends
 * are written as LF: the workbook's XML would turn a bare CR into LF on reading anyway, so the
 * file says plainly what every reader will see.
 */
export function guardSheet(ws: ExcelJS.Worksheet): number {
  let marked = 0;
  ws.eachRow({ includeEmpty: false }, (row) => {
    row.eachCell({ includeEmpty: false }, (cell) => {
      const v = cell.value;
      if (typeof v !== "string") return;
      const risky = isRiskyText(v);
      if (v.includes("\r")) cell.value = v.replace(/\r\n?/g, "\n");
      if (risky) {
        cell.numFmt = "@";
        marked++;
      }
    });
  });
  return marked;
}

/** The text a workbook cell holds for a stored string (line ends as LF). */
export const asCellText = (v: string) => v.replace(/\r\n?/g, "\n");
