/**
 * Turns an uploaded file into a header and rows of raw cell values. The kind of file is judged by
 * its content (file-type), never by its name: .xlsx through exceljs's streaming reader (first sheet;
 * formula cells give their stored result), CSV through csv-parse (delimiter , ; or tab, found from the
 * header line; UTF-8, or Windows-1252 as Excel writes it).
 */
import { Readable } from "node:stream";
import ExcelJS from "exceljs";
import { parse as parseCsv } from "csv-parse/sync";
import { fileTypeFromBuffer } from "file-type";
import { HttpError } from "../lib/http-error";

export type Cell = string | number | boolean | Date | null | { formulaWithoutValue: true } | { cellError: string };

export interface Table {
  format: "xlsx" | "csv" | "json";
  headers: string[];
  /** The row number a person sees in the file (header = 1) and the row's cells in header order. */
  rows: { rowNo: number; cells: Cell[]; invalid?: string }[];
  /** CSV written with ; separators uses the decimal comma. */
  decimalComma: boolean;
}

const unsupported = (message: string) => new HttpError(415, "unsupported_file", message);

export async function readTable(buffer: Buffer): Promise<Table> {
  if (buffer.length === 0) throw new HttpError(400, "empty_file", "The file is empty.");
  const type = await fileTypeFromBuffer(buffer);
  if (type?.ext === "xlsx") return readXlsx(buffer);
  // file-type looks at the first zip entries only; some writers (exceljs's own streaming writer
  // among them) put the workbook parts later. The central directory names them all.
  if (type?.ext === "zip" && looksLikeXlsxZip(buffer)) return readXlsx(buffer);
  if (type) {
    if (type.ext === "cfb") throw unsupported("This is an old-style .xls workbook. Save it as .xlsx (Excel Workbook) or as CSV and try again.");
    if (type.ext === "zip") throw unsupported("This is a zip archive, not an .xlsx workbook.");
    throw unsupported(`This file is a ${type.ext.toUpperCase()} file, not a workbook. Upload an .xlsx workbook or a CSV file.`);
  }
  if (buffer.includes(0)) throw unsupported("This file is not text and not an .xlsx workbook. Upload an .xlsx workbook or a CSV file.");
  return readCsv(buffer);
}

function looksLikeXlsxZip(buffer: Buffer): boolean {
  return buffer.includes("[Content_Types].xml") && buffer.includes("xl/workbook.xml");
}

/** exceljs cell values → our cells: rich text and hyperlinks to text, formulas to their stored result. */
function toCell(v: unknown): Cell {
  if (v === null || v === undefined) return null;
  if (typeof v === "string" || typeof v === "number" || typeof v === "boolean" || v instanceof Date) return v;
  if (typeof v === "object") {
    const o = v as Record<string, unknown>;
    if ("formula" in o || "sharedFormula" in o) {
      return o.result === undefined || o.result === null ? { formulaWithoutValue: true } : toCell(o.result);
    }
    if ("error" in o) return { cellError: String(o.error) };
    if (Array.isArray(o.richText)) return (o.richText as { text: string }[]).map((r) => r.text).join("");
    if ("text" in o) return toCell(o.text);
  }
  return String(v);
}

/** Collects the first sheet's rows: row 1 is the header, blank rows are skipped. */
class SheetRows {
  headers: string[] | null = null;
  rows: Table["rows"] = [];
  add(rowNo: number, values: unknown[]) {
    const cells: Cell[] = [];
    for (let i = 1; i < values.length; i++) cells.push(toCell(values[i]));
    if (this.headers === null) {
      this.headers = cells.map((c) => (c === null ? "" : String(c instanceof Date ? c.toISOString() : c)));
      if (rowNo !== 1) throw new HttpError(400, "bad_header", `The header must be on row 1 of the first sheet (found on row ${rowNo}).`);
      return;
    }
    if (cells.every((c) => c === null || (typeof c === "string" && c.trim() === ""))) return;
    this.rows.push({ rowNo, cells });
  }
  table(sheetSeen: boolean): Table {
    if (!sheetSeen || this.headers === null) throw new HttpError(400, "empty_file", "The workbook has no sheet with a header row.");
    if (this.rows.length === 0) throw new HttpError(400, "empty_file", "The workbook has a header but no data rows.");
    return { format: "xlsx", headers: this.headers, rows: this.rows, decimalComma: false };
  }
}

const unreadable = () => unsupported("The workbook could not be read; it may be damaged or protected. Save it again as .xlsx and retry.");

async function readXlsx(buffer: Buffer): Promise<Table> {
  try {
    return await readXlsxStreaming(buffer);
  } catch (err) {
    if (err instanceof HttpError) throw err;
    // exceljs's streaming reader unzips with `unzipper`, which now and then fails on a sound file
    // when the machine is busy (seen under parallel load: the same bytes read fine a moment later).
    // Before calling a file damaged, read it whole with the standard reader (JSZip); only a file
    // that both refuse is refused.
    return readXlsxWhole(buffer);
  }
}

export async function readXlsxStreaming(buffer: Buffer): Promise<Table> {
  const reader = new ExcelJS.stream.xlsx.WorkbookReader(Readable.from(buffer), {
    sharedStrings: "cache",
    hyperlinks: "ignore",
    worksheets: "emit",
    // Styles tell exceljs which numbers are dates.
    styles: "cache",
    entries: "ignore",
  });
  const out = new SheetRows();
  let sheetSeen = false;
  for await (const sheet of reader) {
    if (sheetSeen) {
      // Only the first sheet holds data (a template's second sheet describes the columns); drain the rest.
      for await (const _row of sheet) void _row;
      continue;
    }
    sheetSeen = true;
    for await (const row of sheet) {
      const r = row as unknown as { values: unknown[]; number: number };
      out.add(r.number, r.values);
    }
  }
  return out.table(sheetSeen);
}

export async function readXlsxWhole(buffer: Buffer): Promise<Table> {
  const wb = new ExcelJS.Workbook();
  try {
    await wb.xlsx.load(buffer as unknown as ArrayBuffer);
  } catch {
    throw unreadable();
  }
  const sheet = wb.worksheets[0];
  const out = new SheetRows();
  sheet?.eachRow({ includeEmpty: false }, (row, rowNo) => out.add(rowNo, row.values as unknown[]));
  return out.table(sheet !== undefined);
}

function decodeText(buffer: Buffer): string {
  try {
    return new TextDecoder("utf-8", { fatal: true }).decode(buffer);
  } catch {
    // Excel on Windows writes CSV in the ANSI code page.
    return new TextDecoder("windows-1252").decode(buffer);
  }
}

function detectDelimiter(headerLine: string): string {
  let best = ",";
  let bestCount = -1;
  for (const d of [",", ";", "\t"]) {
    const n = headerLine.split(d).length - 1;
    if (n > bestCount) {
      best = d;
      bestCount = n;
    }
  }
  return best;
}

function readCsv(buffer: Buffer): Table {
  const text = decodeText(buffer).replace(/^\uFEFF/, "");
  if (text.trim() === "") throw new HttpError(400, "empty_file", "The file is empty.");
  const firstLine = text.slice(0, text.search(/\r?\n|$/));
  const delimiter = detectDelimiter(firstLine);
  let records: { record: string[]; info: { lines: number } }[];
  try {
    records = parseCsv(text, { delimiter, info: true, relax_column_count: true, skip_empty_lines: true, trim: true }) as never;
  } catch (err) {
    const line = (err as { lines?: number }).lines;
    const reason = (err as Error).message.split(":")[0]!.toLowerCase();
    throw new HttpError(400, "bad_csv", `This file is not an .xlsx workbook, and as CSV it could not be read${line ? ` near line ${line}` : ""} (${reason}).`);
  }
  if (records.length === 0) throw new HttpError(400, "empty_file", "The file is empty.");
  const [header, ...data] = records;
  const rows = data
    .filter((r) => r.record.some((c) => c !== ""))
    .map((r) => ({ rowNo: r.info.lines, cells: r.record.map((c) => (c === "" ? null : c)) as Cell[] }));
  if (rows.length === 0) throw new HttpError(400, "empty_file", "The file has a header but no data rows.");
  return { format: "csv", headers: header!.record, rows, decimalComma: delimiter === ";" };
}

/** The level-2 feed's JSON array as a table: the keys seen, in order, become the header. */
export function tableFromJson(items: unknown): Table {
  if (!Array.isArray(items)) throw new HttpError(400, "bad_request", "The body must be a JSON array of objects.");
  if (items.length === 0) throw new HttpError(400, "empty_file", "The array is empty: nothing to import.");
  const headers: string[] = [];
  const index = new Map<string, number>();
  const rows: Table["rows"] = [];
  items.forEach((item, i) => {
    if (item === null || typeof item !== "object" || Array.isArray(item)) {
      rows.push({ rowNo: i + 1, cells: [], invalid: "This item is not an object with the import's keys." });
      return;
    }
    const cells: Cell[] = [];
    for (const [k, v] of Object.entries(item as Record<string, unknown>)) {
      let col = index.get(k);
      if (col === undefined) {
        col = headers.length;
        headers.push(k);
        index.set(k, col);
      }
      cells[col] = v === null || v === undefined ? null : typeof v === "object" ? { cellError: "a nested value" } : (v as Cell);
    }
    rows.push({ rowNo: i + 1, cells });
  });
  for (const r of rows) for (let c = 0; c < headers.length; c++) if (r.cells[c] === undefined) r.cells[c] = null;
  return { format: "json", headers, rows, decimalComma: false };
}
