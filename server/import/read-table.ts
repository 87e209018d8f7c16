/**
 * Turns an uploaded file into a header and rows of raw cell values, under the limits of
 * IMPORT_LIMITS (checked while reading, never after). The kind of file is judged by its content
 * (file-type), never by its name: .xlsx through our bounded streaming reader (read-xlsx.ts: first
 * sheet; formula cells give their stored result), CSV through csv-parse's streaming parser
 * (delimiter , ; or tab, found from the header line; UTF-8, or Windows-1252 as Excel writes it).
 * These run in the import worker (import-pool.ts), never on the server's main thread.
 */
import fs from "node:fs";
import { Readable } from "node:stream";
import { parse as parseCsv } from "csv-parse";
import { loadFileType } from "../lib/lazy-packages";
import { IMPORT_COLUMNS, IMPORT_LIMITS, type ImportKind } from "@shared/api/imports";
import { figure, HttpError, said, type Words } from "../lib/http-error";
import { CellStore, makeTable, type Cell, type Table } from "./cell-store";
import { readXlsxFile, type Limits } from "./read-xlsx";

// The table and its cells are declared with their store (cell-store.ts), which every reader fills.
export type { Cell, Table, TableRow } from "./cell-store";

const unsupported = (message: Words) => new HttpError(415, "unsupported_file", message);
const tooLarge = (message: Words, details?: Record<string, unknown>) => new HttpError(413, "import_too_large", message, details);
/** A count inside a refusal, written as the reader's language groups thousands. */
const fmt = (n: number) => figure(n);

/** Reads the uploaded file at `file` (at most IMPORT_MAX_BYTES, checked by the upload). */
export async function readTable(file: string, limits: Limits = IMPORT_LIMITS): Promise<Table> {
  return readTableAs(file, await fileKindOf(file), limits);
}

/** Reads the file as fileKindOf judged it. */
export async function readTableAs(file: string, kind: "xlsx" | "text", limits: Limits = IMPORT_LIMITS): Promise<Table> {
  if (kind === "xlsx") return readXlsxFile(file, limits);
  const buffer = await fs.promises.readFile(file);
  if (buffer.includes(0)) throw unsupported(said("imports.notText"));
  return readCsv(buffer, limits);
}

/** What the uploaded file is, judged by its content: a workbook, or text to read as CSV; anything else is refused. */
export async function fileKindOf(file: string): Promise<"xlsx" | "text"> {
  const size = (await fs.promises.stat(file)).size;
  if (size === 0) throw new HttpError(400, "empty_file", said("imports.emptyFile"));
  const type = await (await loadFileType()).fileTypeFromFile(file);
  // Whether a zip is a workbook is decided by the workbook reader (xlsx-sheet.ts) from the zip's central directory
  // ([Content_Types].xml and xl/workbook.xml among its entries); a plain zip is refused there. Not
  // from file-type's answer alone: it walks the local headers from the front, and where the sizes
  // follow the data (data descriptors, as exceljs's streaming writer writes every part, with
  // [Content_Types].xml after the sheet) it scans for them, 1 MiB in all, then answers "zip".
  if (type?.ext === "xlsx" || type?.ext === "zip") return "xlsx";
  if (type) {
    if (type.ext === "cfb") throw unsupported(said("imports.oldXls"));
    throw unsupported(said("imports.otherType", { type: type.ext.toUpperCase() }));
  }
  return "text";
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

/**
 * A record with this many separators is not an import row (the imports have fewer than 40 columns
 * and no free text). Counted before parsing because csv-parse builds a record whole before handing
 * it over, and a record of empty fields (",,,,") costs an array slot per comma without adding to its
 * size limit.
 */
const MAX_DELIMITERS_PER_RECORD = 2_000;

/**
 * One pass over the text before parsing, aware of quoted fields (a quoted newline or separator is
 * part of a value): refuses a record with too many separators and a file with too many records, so
 * the parser never builds either.
 */
function precheckCsv(text: string, delimiter: string, limits: Limits) {
  const code = delimiter.charCodeAt(0);
  let inQuotes = false;
  let line = 1;
  let separators = 0;
  let filled = false;
  let records = 0;
  const endRecord = () => {
    if (filled && ++records > limits.rows + 1) {
      throw tooLarge(said("imports.fileTooManyRows", { rows: fmt(limits.rows) }), { limitRows: limits.rows });
    }
    separators = 0;
    filled = false;
  };
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c === 34) {
      inQuotes = !inQuotes; // "" inside a quoted value toggles twice
      filled = true;
    } else if (c === 10) {
      line++;
      if (!inQuotes) endRecord();
    } else if (inQuotes) {
      continue;
    } else if (c === code) {
      if (++separators > MAX_DELIMITERS_PER_RECORD) {
        throw tooLarge(said("imports.lineTooManySeparators", { line: fmt(line), n: fmt(MAX_DELIMITERS_PER_RECORD) }), { line });
      }
    } else if (c !== 13 && c !== 32 && c !== 9) {
      filled = true;
    }
  }
  endRecord();
}

/** The text in 64 KB slices, so the parser hands over records as it goes instead of all at once. */
function* slices(text: string) {
  for (let i = 0; i < text.length; i += 65_536) yield text.slice(i, i + 65_536);
}

async function readCsv(buffer: Buffer, limits: Limits): Promise<Table> {
  const deadline = Date.now() + limits.checkSeconds * 1000;
  const text = decodeText(buffer).replace(/^\uFEFF/, "");
  if (text.trim() === "") throw new HttpError(400, "empty_file", said("imports.emptyFile"));
  const firstLine = text.slice(0, text.search(/\r?\n|$/));
  const delimiter = detectDelimiter(firstLine);
  precheckCsv(text, delimiter, limits);
  const parser = Readable.from(slices(text)).pipe(
    parseCsv({ delimiter, info: true, relax_column_count: true, skip_empty_lines: true, trim: true, max_record_size: limits.csvLineChars }),
  );
  let header: string[] | null = null;
  const rows = new CellStore();
  let cells = 0;
  try {
    for await (const r of parser as AsyncIterable<{ record: string[]; info: { lines: number } }>) {
      if (r.record.length > limits.columns && r.record.slice(limits.columns).some((c) => c !== "")) {
        throw tooLarge(said("imports.lineTooManyColumns", { line: fmt(r.info.lines), n: limits.columns }), {
          line: r.info.lines,
        });
      }
      let filled = 0;
      for (const c of r.record) {
        if (c.length > limits.cellChars) {
          throw tooLarge(said("imports.lineValueTooLong", { line: fmt(r.info.lines), n: fmt(limits.cellChars) }), {
            line: r.info.lines,
          });
        }
        if (c !== "") filled++;
      }
      if (header === null) {
        // Trailing empty header cells (a spreadsheet's stray separators) are no columns.
        while (r.record.length > 0 && r.record[r.record.length - 1] === "") r.record.pop();
        header = r.record;
        continue;
      }
      if (filled === 0) continue;
      cells += filled;
      if (cells > limits.cells) throw tooLarge(said("imports.fileTooManyCells", { n: fmt(limits.cells) }));
      rows.push(
        r.info.lines,
        r.record.map((c) => (c === "" ? null : c)),
      );
      if (rows.length > limits.rows) {
        throw tooLarge(said("imports.fileTooManyRows", { rows: fmt(limits.rows) }), { limitRows: limits.rows });
      }
      if ((rows.length & 0x3fff) === 0 && Date.now() > deadline) {
        throw tooLarge(said("imports.checkTooLong", { seconds: limits.checkSeconds }));
      }
    }
  } catch (err) {
    parser.destroy();
    if (err instanceof HttpError) throw err;
    const e = err as { lines?: number; code?: string; message?: string };
    if (e.code === "CSV_MAX_RECORD_SIZE") {
      throw tooLarge(said("imports.lineTooLong", { line: fmt(e.lines ?? 0), n: fmt(limits.csvLineChars) }), { line: e.lines });
    }
    const reason = (e.message ?? "").split(":")[0]!.toLowerCase();
    throw new HttpError(400, "bad_csv", e.lines ? said("imports.badCsvNear", { line: e.lines, reason }) : said("imports.badCsv", { reason }));
  }
  if (header === null) throw new HttpError(400, "empty_file", said("imports.emptyFile"));
  if (rows.length === 0) throw new HttpError(400, "empty_file", said("imports.fileHeaderNoRows"));
  return makeTable({ format: "csv", headers: header, body: rows, decimalComma: delimiter === ";" });
}

/**
 * The level-2 feed's JSON array as a table. Keys must be the import's own (matched case-insensitively,
 * as a file's header is): an unknown key is refused at once, so a body cannot grow the table one new
 * column per item.
 */
export function tableFromJson(items: unknown, kind: ImportKind, limits: Limits = IMPORT_LIMITS): Table {
  if (!Array.isArray(items)) throw new HttpError(400, "bad_request", said("imports.notAnArray"));
  if (items.length === 0) throw new HttpError(400, "empty_file", said("imports.emptyArray"));
  if (items.length > limits.rows) {
    throw tooLarge(said("imports.feedTooMany", { n: fmt(items.length), max: fmt(limits.rows) }), {
      limitRows: limits.rows,
    });
  }
  const known = new Set(IMPORT_COLUMNS[kind].map((c) => c.key));
  // Columns are keyed by the normalised key (as a file's header is matched), so no spelling of a
  // real key — another case, surrounding spaces — can open a column of its own.
  const headers: string[] = [];
  const index = new Map<string, number>();
  const spelling: string[] = [];
  const rows = new CellStore();
  items.forEach((item, i) => {
    if (item === null || typeof item !== "object" || Array.isArray(item)) {
      rows.push(i + 1, [], "This item is not an object with the import's keys.");
      return;
    }
    const cells: Cell[] = [];
    for (const [k, v] of Object.entries(item as Record<string, unknown>)) {
      const key = k.trim().toLowerCase();
      let col = index.get(key);
      if (col === undefined) {
        if (!known.has(key)) {
          throw new HttpError(
            400,
            "unknown_key",
            said("imports.unknownKey", { item: fmt(i + 1), key: k.slice(0, 80), kind: { terms: [`server:errors.imports.kinds.${kind}`] } }),
            {
              item: i + 1,
              key: k.slice(0, 80),
            },
          );
        }
        col = headers.length;
        headers.push(key);
        spelling.push(k);
        index.set(key, col);
      } else if (spelling[col] !== k) {
        throw new HttpError(400, "mixed_keys", said("imports.mixedKeys", { item: fmt(i + 1), key, spelling: k.slice(0, 80), other: spelling[col]! }), {
          item: i + 1,
          key: k.slice(0, 80),
        });
      }
      cells[col] = v === null || v === undefined ? null : typeof v === "object" ? { cellError: "a nested value" } : (v as Cell);
    }
    rows.push(i + 1, cells);
  });
  // A key an item lacks is an empty cell (the store reads past a row's last cell as empty).
  return makeTable({ format: "json", headers, body: rows, decimalComma: false });
}
