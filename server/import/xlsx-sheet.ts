/**
 * A bounded streaming reader for the first sheet of an .xlsx workbook.
 *
 * Written here because no well-kept library reads a workbook under limits: exceljs's streaming
 * reader keeps every shared string, builds each row whole before handing it over (one row of five
 * million cells), spills a sheet that comes before its shared strings into an unbounded temporary
 * file, and offers no way to count the bytes it inflates. So the zip is read with yauzl (entry sizes
 * from the central directory, and the inflated bytes checked against them while streaming) and the
 * XML with saxes (a SAX parser that expands no DTD entities); this file only walks the few
 * SpreadsheetML elements an import needs (ECMA-376 part 1, §18.3 sheet data, §18.4 shared strings)
 * and counts while it walks: unpacked bytes, rows, columns, cells, characters per cell, time.
 *
 * Cells come back as exceljs gave them before, except that numbers stay numbers: a date is Excel's
 * serial day number, which the import's date columns read (date1904 workbooks are flagged).
 *
 * The rows are handed to a sink as they are read: read-xlsx.ts keeps them all (readXlsxFile), the
 * reader thread (read-thread.ts) sends them on a page of cells at a time. This module loads nothing
 * beyond the zip and XML parsers, so that thread starts small (the limits come from the caller).
 */
import path from "node:path";
import { promisify } from "node:util";
import type { Readable } from "node:stream";
import { SaxesParser, type SaxesAttributePlain, type SaxesTagPlain } from "saxes";
import yauzl, { type Entry, type ZipFile } from "yauzl";
import type { IMPORT_LIMITS } from "@shared/api/imports";
import { figure, HttpError, said, type Said, type SaidValues, type Words } from "../lib/http-error";
import type { Cell } from "./cell-store";

export type Limits = { [K in keyof typeof IMPORT_LIMITS]: number };

const tooLarge = (message: Words, details?: Record<string, unknown>) => new HttpError(413, "import_too_large", message, details);
/** Refused as unreadable: the sentence, or one of its variants naming why (imports.workbook.unreadableBecause.*). */
const unreadable = (why?: Said) => new HttpError(415, "unsupported_file", why ?? said("imports.workbook.unreadable"));
const because = (why: string, values?: SaidValues) => said(`imports.workbook.unreadableBecause.${why}`, values);
/** A count inside a refusal, written as the reader's language groups thousands. */
const fmt = (n: number) => figure(n);
const mb = (n: number) => `${Math.round(n / 1024 / 1024)} MB`;

/** Characters fed to the parser without it reporting anything: a text run, attribute or comment this long is an attack, not a sheet. */
const MAX_CHARS_WITHOUT_EVENT = 1_000_000;
/** Elements nested deeper than this do not occur in SpreadsheetML. */
const MAX_DEPTH = 64;
/** Workbook, relations and content-type parts are small; a large one is not a workbook. */
const MAX_SMALL_PART = 16 * 1024 * 1024;

const localName = (name: string) => {
  const i = name.indexOf(":");
  return i < 0 ? name : name.slice(i + 1);
};

/** "BC12" → 54 (0-based column index); null when the reference is not A1-style. */
function columnOf(ref: string | undefined): number | null {
  if (!ref) return null;
  let col = 0;
  let i = 0;
  for (; i < ref.length; i++) {
    const c = ref.charCodeAt(i);
    if (c >= 65 && c <= 90) col = col * 26 + (c - 64);
    else if (c >= 97 && c <= 122) col = col * 26 + (c - 96);
    else break;
    if (col > 1_000_000) return null;
  }
  return i === 0 ? null : col - 1;
}

interface Budget {
  limits: Limits;
  unpacked: number;
  deadline: number;
}

function checkTime(budget: Budget) {
  if (Date.now() > budget.deadline) {
    throw tooLarge(said("imports.checkTooLong", { seconds: budget.limits.checkSeconds }));
  }
}

const openZip = promisify<string, yauzl.Options, ZipFile>(yauzl.open);

async function listEntries(zip: ZipFile, limits: Limits): Promise<Map<string, Entry>> {
  if (zip.entryCount > limits.zipEntries) throw unreadable(because("tooManyParts", { parts: fmt(zip.entryCount) }));
  const entries = new Map<string, Entry>();
  await new Promise<void>((resolve, reject) => {
    zip.on("entry", (e: Entry) => {
      const name = e.fileName.replace(/\\/g, "/").replace(/^\/+/, "");
      if (!entries.has(name)) entries.set(name, e);
      zip.readEntry();
    });
    zip.once("end", resolve);
    zip.once("error", reject);
    zip.readEntry();
  });
  return entries;
}

interface PartHandlers {
  /** An element's name, before its attributes. */
  opentagstart?: (tag: SaxesTagPlain) => void;
  /** Each attribute of the element begun, in document order. */
  attribute?: (attr: SaxesAttributePlain) => void;
  opentag?: (tag: SaxesTagPlain) => void;
  closetag?: (tag: SaxesTagPlain) => void;
  /** Character data, CDATA included. */
  text?: (text: string) => void;
}

/**
 * Streams one part through a SAX parser, counting inflated bytes against the budget and watching
 * for runs of input that produce no parser event (a huge text node, attribute or comment) and for
 * nesting deeper than SpreadsheetML uses. (saxes keeps one handler per event, so the checks wrap
 * the caller's handlers.)
 */
async function parsePart(zip: ZipFile, entry: Entry, budget: Budget, handlers: PartHandlers): Promise<void> {
  if (entry.isEncrypted()) throw unreadable(because("encrypted"));
  let stream: Readable;
  try {
    stream = await new Promise<Readable>((resolve, reject) => zip.openReadStream(entry, (err, s) => (err ? reject(err) : resolve(s!))));
  } catch (err) {
    // yauzl refuses an entry it cannot read: an unknown compression method, a broken local header.
    throw unreadable(/compression method/i.test((err as Error).message ?? "") ? because("packing") : undefined);
  }
  const parser = new SaxesParser({ xmlns: false, position: false });
  let sinceEvent = 0;
  let depth = 0;
  // An element's start and its attributes are reported as they are read, but only an element's
  // end, its close or text counts as an event: a tag of many long attributes is a run without one.
  if (handlers.opentagstart) parser.on("opentagstart", handlers.opentagstart as (tag: unknown) => void);
  if (handlers.attribute) parser.on("attribute", handlers.attribute as (attr: unknown) => void);
  parser.on("opentag", (tag) => {
    sinceEvent = 0;
    if (++depth > MAX_DEPTH) throw unreadable(because("tooDeep"));
    handlers.opentag?.(tag as SaxesTagPlain);
  });
  parser.on("closetag", (tag) => {
    sinceEvent = 0;
    depth--;
    handlers.closetag?.(tag as SaxesTagPlain);
  });
  const onText = (text: string) => {
    sinceEvent = 0;
    handlers.text?.(text);
  };
  parser.on("text", onText);
  parser.on("cdata", onText);
  let parseError: Error | null = null;
  parser.on("error", (err) => {
    parseError = err;
  });
  const decoder = new TextDecoder("utf-8");
  try {
    for await (const chunk of stream as AsyncIterable<Buffer>) {
      budget.unpacked += chunk.length;
      if (budget.unpacked > budget.limits.unpackedBytes) {
        throw tooLarge(said("imports.workbook.unpacksOver", { size: mb(budget.limits.unpackedBytes) }), {
          limitBytes: budget.limits.unpackedBytes,
        });
      }
      checkTime(budget);
      // Feed in slices so a text run without events is caught within a bounded amount of input.
      const text = decoder.decode(chunk, { stream: true });
      for (let i = 0; i < text.length; i += 65_536) {
        const piece = text.slice(i, i + 65_536);
        sinceEvent += piece.length;
        parser.write(piece);
        if (parseError) throw unreadable(because("notWellFormed"));
        if (sinceEvent > MAX_CHARS_WITHOUT_EVENT) {
          throw tooLarge(said("imports.workbook.runTooLong", { n: fmt(MAX_CHARS_WITHOUT_EVENT) }));
        }
      }
    }
    parser.write(decoder.decode());
    parser.close();
    if (parseError) throw unreadable(because("notWellFormed"));
  } catch (err) {
    stream.destroy();
    if (err instanceof HttpError) throw err;
    const message = (err as Error).message ?? "";
    // yauzl checks the inflated bytes against the size the zip declares: more is a forged entry.
    if (/too many bytes|expected \d+ bytes/i.test(message)) throw unreadable(because("overDeclared"));
    throw unreadable();
  }
}

async function readSmallPart(zip: ZipFile, entry: Entry, budget: Budget, onTag: (tag: SaxesTagPlain) => void) {
  if (entry.uncompressedSize > MAX_SMALL_PART) throw unreadable(because("bigPart", { part: entry.fileName, size: mb(entry.uncompressedSize) }));
  await parsePart(zip, entry, budget, { opentag: onTag });
}

const attr = (tag: SaxesTagPlain, name: string): string | undefined => {
  // for…in rather than Object.entries: this runs twice per cell, and entries builds arrays each time.
  const attributes = tag.attributes;
  for (const k in attributes) if (localName(k) === name && (k === name || k.endsWith(`:${name}`))) return attributes[k] as string;
  return undefined;
};

/**
 * Whether a zip is a workbook, from its central directory, which names every entry wherever the
 * writer put it: an Open Packaging Conventions package (ECMA-376 part 2) has [Content_Types].xml at
 * its root, and a SpreadsheetML one its workbook part, which Excel and LibreOffice write as
 * xl/workbook.xml (the only name this reader opens).
 */
const isWorkbookPackage = (entries: Map<string, Entry>) => entries.has("[Content_Types].xml") && entries.has("xl/workbook.xml");

/** The first sheet's part name, the shared strings part name, and the workbook's date system. */
async function locateSheet(zip: ZipFile, entries: Map<string, Entry>, budget: Budget) {
  const workbook = entries.get("xl/workbook.xml")!;
  const rels = entries.get("xl/_rels/workbook.xml.rels");
  if (!rels) throw unreadable(because("noRels"));
  let firstSheetRel: string | undefined;
  let date1904 = false;
  await readSmallPart(zip, workbook, budget, (tag) => {
    const name = localName(tag.name);
    if (name === "sheet" && firstSheetRel === undefined) {
      // r:id, in the relationships namespace (its prefix is usually, not always, "r").
      firstSheetRel = Object.entries(tag.attributes).find(([k]) => k.includes(":") && localName(k) === "id")?.[1] as string | undefined;
    }
    if (name === "workbookPr") {
      const v = attr(tag, "date1904");
      date1904 = v === "1" || v === "true";
    }
  });
  const targets = new Map<string, { target: string; type: string }>();
  await readSmallPart(zip, rels, budget, (tag) => {
    if (localName(tag.name) !== "Relationship") return;
    const id = attr(tag, "Id");
    const target = attr(tag, "Target");
    if (id && target) targets.set(id, { target, type: attr(tag, "Type") ?? "" });
  });
  const resolve = (target: string) => (target.startsWith("/") ? path.posix.normalize(target.slice(1)) : path.posix.normalize(path.posix.join("xl", target)));
  const sheetTarget = firstSheetRel ? targets.get(firstSheetRel) : undefined;
  if (!sheetTarget) throw new HttpError(400, "empty_file", said("imports.noHeaderSheet"));
  const sharedTarget = [...targets.values()].find((t) => t.type.endsWith("/sharedStrings"));
  return { sheet: resolve(sheetTarget.target), sharedStrings: sharedTarget ? resolve(sharedTarget.target) : "xl/sharedStrings.xml", date1904 };
}

/** The shared string table (§18.4.8): each <si> is plain <t> text or rich-text runs <r><t>; phonetic runs (<rPh>) are not text. */
async function readSharedStrings(zip: ZipFile, entry: Entry, budget: Budget): Promise<string[]> {
  const { limits } = budget;
  const strings: string[] = [];
  let inSi = false;
  let inT = false;
  let phonetic = 0;
  let current: string[] = [];
  let currentLength = 0;
  await parsePart(zip, entry, budget, {
    opentag: (tag) => {
      const name = localName(tag.name);
      if (name === "si") {
        inSi = true;
        current = [];
        currentLength = 0;
      } else if (name === "rPh") phonetic++;
      else if (name === "t" && inSi && phonetic === 0) inT = !tag.isSelfClosing;
    },
    text: (text) => {
      if (!inT) return;
      currentLength += text.length;
      if (currentLength > limits.cellChars) {
        throw tooLarge(said("imports.workbook.textTooLong", { n: fmt(limits.cellChars) }));
      }
      current.push(text);
    },
    closetag: (tag) => {
      const name = localName(tag.name);
      if (name === "t") inT = false;
      else if (name === "rPh") phonetic--;
      else if (name === "si") {
        inSi = false;
        strings.push(current.join(""));
        if (strings.length > limits.cells) {
          throw tooLarge(said("imports.workbook.tooManyTexts", { n: fmt(limits.cells) }));
        }
      }
    },
  });
  return strings;
}

/** Where the rows of the sheet go as they are read. */
export interface SheetSink {
  /** Row 1's texts, and whether the workbook counts dates from 1904; before any data row. */
  header(headers: string[], date1904: boolean): void;
  /** A data row that holds a value: its number as Excel shows it, its cells by column (the array is reused: copy what you keep). */
  row(rowNo: number, cells: readonly Cell[]): void;
}

/** Reads the first sheet into the sink: row 1 is the header, blank rows are skipped, limits checked per cell. */
async function readSheet(
  zip: ZipFile,
  entry: Entry,
  budget: Budget,
  shared: string[],
  date1904: boolean,
  sink: SheetSink,
): Promise<{ header: boolean; rows: number }> {
  const { limits } = budget;
  let headers: string[] | null = null;
  let dataRows = 0;
  let cellsSeen = 0;
  let inSheetData = false;
  // The row being read (one array, reused: the store copies each row).
  let rowNo = 0;
  const cells: Cell[] = [];
  let rowHasValue = false;
  let lastCol = -1;
  // The cell being read.
  let col = -1;
  let type = "n";
  // The cell's text so far (pieces joined as they come: usually one).
  let value: string | null = null;
  let valueLength = 0;
  let hasFormula = false;
  let capture: "v" | "t" | null = null;
  let inInline = false;
  let phonetic = 0;
  // The r and t attributes of the row or cell element begun, the first of each local name (as attr()
  // reads them), taken from the parser's attribute events: looking them up on each element's
  // attributes object was a fifth of the reading.
  let element = "";
  let attrR: string | undefined;
  let attrT: string | undefined;

  const finishCell = () => {
    const raw = value;
    let cell: Cell = null;
    switch (type) {
      case "s": {
        if (raw === null) break;
        const i = Number(raw);
        cell = Number.isInteger(i) && i >= 0 && i < shared.length ? shared[i]! : { cellError: "a reference to a missing shared text" };
        break;
      }
      case "inlineStr":
        cell = raw;
        break;
      case "str":
        cell = raw ?? (hasFormula ? { formulaWithoutValue: true } : null);
        break;
      case "b":
        cell = raw === null ? null : raw.trim() === "1" || raw.trim().toLowerCase() === "true";
        break;
      case "e":
        cell = raw === null ? null : { cellError: raw };
        break;
      case "d":
        cell = raw;
        break;
      default: {
        if (raw === null) {
          cell = hasFormula ? { formulaWithoutValue: true } : null;
          break;
        }
        const n = Number(raw);
        cell = raw.trim() !== "" && Number.isFinite(n) ? n : raw;
      }
    }
    if (cell === null || (typeof cell === "string" && cell.trim() === "")) return;
    if (col >= limits.columns) {
      throw tooLarge(said("imports.workbook.rowTooManyColumns", { row: fmt(rowNo), n: limits.columns }), {
        row: rowNo,
      });
    }
    if (++cellsSeen > limits.cells) {
      throw tooLarge(said("imports.workbook.tooManyCells", { n: fmt(limits.cells) }));
    }
    while (cells.length < col) cells.push(null);
    cells[col] = cell;
    rowHasValue = true;
  };

  const finishRow = () => {
    if (!rowHasValue) return;
    if (headers === null) {
      if (rowNo !== 1) throw new HttpError(400, "bad_header", said("imports.workbook.headerNotFirst", { row: rowNo }));
      headers = cells.map((c) => (c === null ? "" : String(c)));
      sink.header(headers, date1904);
      return;
    }
    // Counted before the sink sees it, so no sink ever holds more rows than the limit.
    if (++dataRows > limits.rows) {
      throw tooLarge(said("imports.workbook.tooManyRows", { rows: fmt(limits.rows) }), { limitRows: limits.rows });
    }
    sink.row(rowNo, cells);
    if ((dataRows & 0x3fff) === 0) checkTime(budget);
  };

  await parsePart(zip, entry, budget, {
    opentagstart: (t) => {
      element = localName(t.name);
      attrR = attrT = undefined;
    },
    attribute: (a) => {
      if (element !== "c" && element !== "row") return;
      const name = localName(a.name);
      if (name === "r") attrR ??= a.value;
      else if (name === "t") attrT ??= a.value;
    },
    opentag: (t) => {
      // The element whose start and attributes just came (opentagstart named it).
      const name = element;
      if (name === "sheetData") {
        inSheetData = true;
        return;
      }
      if (!inSheetData) return;
      switch (name) {
        case "row": {
          const r = Number(attrR);
          rowNo = Number.isInteger(r) && r > 0 ? r : rowNo + 1;
          cells.length = 0;
          rowHasValue = false;
          lastCol = -1;
          break;
        }
        case "c": {
          const c = columnOf(attrR);
          col = c ?? lastCol + 1;
          lastCol = col;
          type = attrT ?? "n";
          value = null;
          valueLength = 0;
          hasFormula = false;
          inInline = false;
          if (t.isSelfClosing) finishCell();
          break;
        }
        case "v":
          capture = "v";
          value = value ?? "";
          break;
        case "f":
          hasFormula = true;
          break;
        case "is":
          inInline = true;
          value = value ?? "";
          break;
        case "rPh":
          phonetic++;
          break;
        case "t":
          if (inInline && phonetic === 0) capture = "t";
          break;
      }
    },
    text: (text) => {
      if (capture === null || value === null) return;
      valueLength += text.length;
      if (valueLength > limits.cellChars) {
        throw tooLarge(said("imports.workbook.cellTooLong", { row: fmt(rowNo), n: fmt(limits.cellChars) }), {
          row: rowNo,
        });
      }
      value += text;
    },
    closetag: (tag) => {
      const name = localName(tag.name);
      if (name === "sheetData") inSheetData = false;
      if (!inSheetData) return;
      switch (name) {
        case "v":
        case "t":
          capture = null;
          break;
        case "rPh":
          phonetic--;
          break;
        case "is":
          inInline = false;
          break;
        case "c":
          if (!tag.isSelfClosing) finishCell();
          break;
        case "row":
          finishRow();
          break;
      }
    },
  });
  return { header: headers !== null, rows: dataRows };
}

/** Reads the first sheet of the workbook at `file` under the limits into the sink; refuses a sheet without header or data rows. */
export async function streamXlsxFile(file: string, limits: Limits, sink: SheetSink): Promise<void> {
  const budget: Budget = { limits, unpacked: 0, deadline: Date.now() + limits.checkSeconds * 1000 };
  let zip: ZipFile;
  try {
    zip = await openZip(file, { lazyEntries: true, autoClose: false, validateEntrySizes: true, strictFileNames: false });
  } catch {
    throw unreadable();
  }
  try {
    let entries: Map<string, Entry>;
    try {
      entries = await listEntries(zip, limits);
    } catch (err) {
      // yauzl validates every name (no absolute paths, no "..") and the directory's structure.
      if (err instanceof HttpError) throw err;
      throw unreadable();
    }
    if (!isWorkbookPackage(entries)) throw new HttpError(415, "unsupported_file", said("imports.workbook.plainZip"));
    const { sheet, sharedStrings, date1904 } = await locateSheet(zip, entries, budget);
    const sheetEntry = entries.get(sheet);
    if (!sheetEntry) throw unreadable(because("noSheet"));
    const sharedEntry = entries.get(sharedStrings);
    // The sizes the zip declares are checked before anything is inflated, so a bomb is refused at once;
    // the inflated bytes are counted again while streaming (a zip can lie about its sizes).
    const declared = sheetEntry.uncompressedSize + (sharedEntry?.uncompressedSize ?? 0) + budget.unpacked;
    if (declared > limits.unpackedBytes) {
      throw tooLarge(said("imports.workbook.declaredOver", { size: mb(declared), limit: mb(limits.unpackedBytes) }), {
        unpackedBytes: declared,
        limitBytes: limits.unpackedBytes,
      });
    }
    const shared = sharedEntry ? await readSharedStrings(zip, sharedEntry, budget) : [];
    const { header, rows } = await readSheet(zip, sheetEntry, budget, shared, date1904, sink);
    if (!header) throw new HttpError(400, "empty_file", said("imports.noHeaderSheet"));
    if (rows === 0) throw new HttpError(400, "empty_file", said("imports.workbook.headerNoRows"));
  } finally {
    zip.close();
  }
}
