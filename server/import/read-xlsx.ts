/**
 * The first sheet of an .xlsx workbook read whole under the limits: the bounded streaming reader
 * (xlsx-sheet.ts) with every row kept as compact cells (cell-store.ts). A large workbook imported
 * for real is read in a thread of its own instead (read-thread.ts), a page of cells at a time.
 */
import { IMPORT_LIMITS } from "@shared/api/imports";
import { CellStore, makeTable, type Table } from "./cell-store";
import { streamXlsxFile, type Limits } from "./xlsx-sheet";

export type { Limits } from "./xlsx-sheet";

/** Reads the first sheet of the workbook at `file` under the limits. */
export async function readXlsxFile(file: string, limits: Limits = IMPORT_LIMITS): Promise<Table> {
  const rows = new CellStore();
  let headers: string[] = [];
  let date1904 = false;
  await streamXlsxFile(file, limits, {
    header: (h, d) => {
      headers = h;
      date1904 = d;
    },
    row: (rowNo, cells) => rows.push(rowNo, cells),
  });
  return makeTable({ format: "xlsx", headers, body: rows, decimalComma: false, date1904 });
}
