import { afterAll, beforeAll, describe, expect, it } from "vitest";
import ExcelJS from "exceljs";
import sharp from "sharp";
import type request from "supertest";
import { createTestApp, type TestApp } from "../helpers/test-app";
import { csv, xlsx, type Row } from "../helpers/workbooks";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { fileTypeFromFile } from "file-type";
import { readTable } from "../../server/import/read-table";
import { parseDateTime } from "../../server/import/coerce";
import { buildZip, sheetXml } from "../helpers/zip-bombs";

let t: TestApp;
let process_: request.Agent;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
  process_ = await t.agentFor("process");
});
afterAll(() => t?.close());

const q = (sql: string, ...args: unknown[]) => t.db.$client.prepare(sql).get(...args) as Record<string, any> | undefined;
const n = (sql: string, ...args: unknown[]) =>
  t.db.$client
    .prepare(sql)
    .pluck()
    .get(...args) as number;

function upload(kind: string, buf: Buffer, name: string, dryRun = false) {
  return process_
    .post(`/api/import/${kind}${dryRun ? "?dryRun=true" : ""}`)
    .set("Origin", t.env.BETTER_AUTH_URL)
    .attach("file", buf, name);
}

const HEAT_HEADERS = [
  "heat_no",
  "sequence_no",
  "caster",
  "grade",
  "cast_start",
  "cast_end",
  "casting_speed_m_min",
  "tundish_temp_c",
  "embr_current_a",
  "sen_depth_mm",
  "c_pct",
  "si_pct",
  "mn_pct",
  "p_pct",
  "s_pct",
];
const heat = (i: number, extra: Partial<Row> = {}): Row => ({
  heat_no: `IMP${String(i).padStart(5, "0")}`,
  sequence_no: `IMPSEQ-${Math.floor(i / 8)}`,
  caster: "CC2",
  grade: "LV-ST32",
  cast_start: new Date(Date.UTC(2026, 11, 1, 0, 0) + i * 40 * 60_000),
  cast_end: new Date(Date.UTC(2026, 11, 1, 0, 32) + i * 40 * 60_000),
  casting_speed_m_min: 1.4,
  tundish_temp_c: 1545,
  embr_current_a: 300,
  sen_depth_mm: 160,
  c_pct: 0.12,
  si_pct: 0.2,
  mn_pct: 0.9,
  p_pct: 0.015,
  s_pct: 0.008,
  ...extra,
});

describe("heats import", () => {
  it("when a good workbook is imported, then the heats are written with computed liquidus, superheat and sequence positions", async () => {
    const rows = [0, 1, 2].map((i) => heat(i));
    const res = await upload("heats", await xlsx(HEAT_HEADERS, rows), "heats.xlsx");
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body).toMatchObject({ valid: true, rows: 3, counts: { created: 3, updated: 0, unchanged: 0 }, errorCount: 0 });
    const h = q("select * from heats where heat_no = 'IMP00001'")!;
    // Won & Thomas 2001 (Metall. Mater. Trans. A 32A:1755): 1536 − (9.36 + 1.52 + 4.41 + 0.516 + 0.304) = 1519.89 °C
    expect(h.liquidus_c).toBeCloseTo(1519.89, 2);
    expect(h.liquidus_source).toBe("computed");
    expect(h.superheat_c).toBeCloseTo(1545 - 1519.89, 2);
    expect(h.superheat_source).toBe("computed");
    expect(h.sequence_position).toBe(2);
    expect(h.cast_start).toBe(Date.UTC(2026, 11, 1, 0, 40));
    expect(n("select count(*) from import_runs where kind = 'heats'")).toBe(1);
    expect(n("select count(*) from audit_log where action = 'import.heats'")).toBe(1);
  });

  it("when the same file is imported again, then nothing changes and all rows are unchanged", async () => {
    const before = t.db.$client.prepare("select * from heats where heat_no like 'IMP%' order by id").all();
    const res = await upload(
      "heats",
      await xlsx(
        HEAT_HEADERS,
        [0, 1, 2].map((i) => heat(i)),
      ),
      "heats.xlsx",
    );
    expect(res.status).toBe(201);
    expect(res.body.counts).toEqual({ created: 0, updated: 0, unchanged: 3 });
    expect(t.db.$client.prepare("select * from heats where heat_no like 'IMP%' order by id").all()).toEqual(before);
  });

  it("when one value changes, then that heat is updated and the rest unchanged", async () => {
    const rows = [0, 1, 2].map((i) => heat(i, i === 2 ? { casting_speed_m_min: 1.55 } : {}));
    const res = await upload("heats", await xlsx(HEAT_HEADERS, rows), "heats.xlsx");
    expect(res.body.counts).toEqual({ created: 0, updated: 1, unchanged: 2 });
    expect(q("select casting_speed_m_min from heats where heat_no = 'IMP00002'")!.casting_speed_m_min).toBe(1.55);
  });

  it.each(["xlsx", "csv"])("when one row among 1,000 is bad (%s), then nothing at all is written and the row is named", async (format) => {
    const heatsBefore = n("select count(*) from heats");
    const runsBefore = n("select count(*) from import_runs");
    const rows = Array.from({ length: 1000 }, (_, i) => heat(100 + i, i === 617 ? { casting_speed_m_min: "fast" } : {}));
    const file = format === "xlsx" ? await xlsx(HEAT_HEADERS, rows) : csv(HEAT_HEADERS, rows);
    const res = await upload("heats", file, `thousand.${format}`);
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe("import_rejected");
    // Row 617 of the data is spreadsheet row 619 (header on row 1, data from row 2).
    expect(res.body.error.details.errors).toEqual([{ row: 619, column: "casting_speed_m_min", message: "casting_speed_m_min “fast” is not a number." }]);
    expect(res.body.error.details.counts.created).toBe(999);
    expect(n("select count(*) from heats")).toBe(heatsBefore);
    expect(n("select count(*) from import_runs")).toBe(runsBefore);
    expect(n("select count(*) from sequences where sequence_no like 'IMPSEQ-1%'")).toBe(0);
  });

  it("when the same thing comes as CSV with ; and decimal commas, then it reads the same", async () => {
    const res = await upload("heats", csv(HEAT_HEADERS, [heat(3), heat(4)], ";", true), "heats.csv");
    expect(res.status).toBe(201);
    expect(res.body.format).toBe("csv");
    expect(res.body.counts.created).toBe(2);
    expect(q("select casting_speed_m_min, c_pct from heats where heat_no = 'IMP00003'")).toEqual({ casting_speed_m_min: 1.4, c_pct: 0.12 });
  });

  it("when a dry run is asked for, then the preview comes back and nothing is written", async () => {
    const before = n("select count(*) from heats");
    const res = await upload("heats", await xlsx(HEAT_HEADERS, [heat(50), heat(51)]), "heats.xlsx", true);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ dryRun: true, valid: true, counts: { created: 2 }, importId: null });
    expect(n("select count(*) from heats")).toBe(before);
  });

  it("when the file has bad keys and bad values, then each problem is listed with its row and column", async () => {
    const headers = ["Heat_No", "caster", "grade", "cast_start", "casting_speed_m_min", "tundish_temp_c", "liquidus_c", "c_pct", "mn_pct", "colour"];
    const rows: Row[] = [
      { Heat_No: "BAD1", caster: "CC2", grade: "LV-ST32", cast_start: "2026-12-02T10:00:00Z", casting_speed_m_min: 25, colour: "red" },
      { Heat_No: "BAD2", caster: "CC9", grade: "NOPE", cast_start: "tomorrow", casting_speed_m_min: 1.2 },
      {
        Heat_No: "BAD3",
        caster: "CC2",
        grade: "LV-ST32",
        cast_start: "2026-12-02T11:00:00Z",
        casting_speed_m_min: 1.2,
        tundish_temp_c: 1700,
        liquidus_c: 1500,
      },
      { Heat_No: "BAD4", caster: "CC2", grade: "LV-ST32", cast_start: "2026-12-02T12:00:00Z", casting_speed_m_min: 1.2, c_pct: 60, mn_pct: 45 },
      { Heat_No: "BAD1", caster: "CC2", grade: "LV-ST32", cast_start: "2026-12-02T13:00:00Z", casting_speed_m_min: 1.2 },
    ];
    const res = await upload("heats", await xlsx(headers, rows), "bad.xlsx", true);
    expect(res.status).toBe(200);
    expect(res.body.valid).toBe(false);
    const errs = res.body.errors as { row: number; column: string | null; message: string }[];
    const has = (row: number, column: string | null, text: string) =>
      expect(
        errs.some((e) => e.row === row && e.column === column && e.message.includes(text)),
        `${row} ${column} ${text}\n${JSON.stringify(errs, null, 1)}`,
      ).toBe(true);
    has(1, "colour", "Unknown column: colour");
    has(2, "casting_speed_m_min", "25 is outside 0.1–10 m/min");
    has(3, "caster", "Caster CC9 is not set up");
    has(3, "grade", "Grade NOPE is not set up");
    has(3, "cast_start", "“tomorrow” is not a date");
    has(4, "tundish_temp_c", "superheat works out at 200 °C");
    has(5, null, "adds up to 105.00 %");
    has(6, "heat_no", "appears twice in the file (first on row 2)");
    expect(res.body.errorCount).toBe(errs.length);
  });

  it("when a required column is missing, then one error says which", async () => {
    const res = await upload("heats", await xlsx(["heat_no", "caster", "grade"], [{ heat_no: "X", caster: "CC2", grade: "LV-ST32" }]), "x.xlsx", true);
    expect(res.body.errors).toEqual([
      { row: 1, column: "cast_start, casting_speed_m_min", message: "Missing required columns: cast_start, casting_speed_m_min." },
    ]);
  });

  it("when cells hold formulas, then their stored values are imported", async () => {
    const rows = [heat(60, { casting_speed_m_min: { formula: "0.7*2", result: 1.4 }, c_pct: { formula: "0.06*2", result: 0.12 } })];
    const res = await upload("heats", await xlsx(HEAT_HEADERS, rows), "formulas.xlsx");
    expect(res.status).toBe(201);
    expect(q("select casting_speed_m_min, c_pct from heats where heat_no = 'IMP00060'")).toEqual({ casting_speed_m_min: 1.4, c_pct: 0.12 });
  });

  it("when our bounded reader and exceljs's whole-workbook reader read one workbook, then they give the same cells (dates, formulas, blanks, rich text)", async () => {
    // The reader is our own (bounded while streaming); exceljs's standard reader is the reference.
    const rows = [heat(70), heat(71, { casting_speed_m_min: { formula: "0.7*2", result: 1.4 }, sen_depth_mm: null }), heat(72)];
    const wb = new ExcelJS.Workbook();
    const ws = wb.addWorksheet("Data");
    ws.addRow(HEAT_HEADERS);
    for (const r of rows) ws.addRow(HEAT_HEADERS.map((h) => (r[h] === undefined ? null : r[h])));
    ws.getCell("B3").value = { richText: [{ text: "IMPSEQ" }, { font: { bold: true }, text: "-8" }] };
    wb.addWorksheet("Notes").addRow(["not data"]);
    const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), "reader-")), "heats.xlsx");
    await wb.xlsx.writeFile(file);
    const ours = await readTable(file);
    const reference = new ExcelJS.Workbook();
    await reference.xlsx.readFile(file);
    const refRows: unknown[][] = [];
    reference.worksheets[0]!.eachRow((row, rowNo) => {
      if (rowNo === 1) return;
      // Array.from: exceljs leaves holes for empty cells, which map() would skip.
      const cells = Array.from((row.values as unknown[]).slice(1), (v) => {
        if (v && typeof v === "object" && "result" in v) return (v as { result: unknown }).result;
        if (v && typeof v === "object" && "richText" in v) return (v as { richText: { text: string }[] }).richText.map((x) => x.text).join("");
        return v ?? null;
      });
      refRows.push(cells);
    });
    expect(ours.headers).toEqual(HEAT_HEADERS);
    expect(ours.rows.map((r) => r.rowNo)).toEqual([2, 3, 4]);
    // Dates stay Excel serial numbers in our reader; the import's date columns read them.
    const asRef = ours.rows.map((r) =>
      r.cells.map((c, i) => (HEAT_HEADERS[i]!.startsWith("cast_") && typeof c === "number" ? new Date(parseDateTime(c) as number) : c)),
    );
    expect(asRef.map((r) => r.slice(0, refRows[0]!.length))).toEqual(refRows);
    expect(ours.rows[1]!.cells[HEAT_HEADERS.indexOf("casting_speed_m_min")]).toBe(1.4);
    expect(ours.rows[1]!.cells[HEAT_HEADERS.indexOf("sen_depth_mm")] ?? null).toBeNull();
    expect(ours.rows[1]!.cells[HEAT_HEADERS.indexOf("sequence_no")]).toBe("IMPSEQ-8");
    expect(parseDateTime(ours.rows[0]!.cells[HEAT_HEADERS.indexOf("cast_start")]!)).toBe(Date.UTC(2026, 11, 1, 0, 0) + 70 * 40 * 60_000);
    // The forms the refusal of a date offers (year first, a space or a T, an offset or UTC) are read.
    expect(parseDateTime("2026-11-03 14:20")).toBe(Date.UTC(2026, 10, 3, 14, 20));
    expect(parseDateTime("2026-11-03T14:20:00Z")).toBe(Date.UTC(2026, 10, 3, 14, 20));
    expect(parseDateTime("2026-11-03 14:20+01:00")).toBe(Date.UTC(2026, 10, 3, 13, 20));
  });

  it("when a formula has no stored value, then the row says to let Excel calculate it", async () => {
    const res = await upload("heats", await xlsx(HEAT_HEADERS, [heat(61, { casting_speed_m_min: { formula: "A1*2" } })]), "f.xlsx", true);
    expect(res.body.errors[0]).toMatchObject({ row: 2, column: "casting_speed_m_min" });
    expect(res.body.errors[0].message).toContain("formula with no stored value");
  });
});

describe("bad files", () => {
  it("when the file is a PNG named .xlsx, then 415 says it is not a workbook", async () => {
    const png = await sharp({ create: { width: 4, height: 4, channels: 3, background: "#888" } })
      .png()
      .toBuffer();
    const res = await upload("heats", png, "heats.xlsx");
    expect(res.status).toBe(415);
    expect(res.body.error.message).toContain("PNG file, not a workbook");
  });

  it("when the workbook has no data rows, then 400 empty_file", async () => {
    const res = await upload("heats", await xlsx(HEAT_HEADERS, []), "empty.xlsx");
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("empty_file");
  });

  it("when the file is larger than 20 MB, then 413 and nothing is written", async () => {
    const before = n("select count(*) from heats");
    const big = Buffer.alloc(21 * 1024 * 1024, "a");
    const res = await upload("heats", big, "big.csv");
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe("too_large");
    expect(n("select count(*) from heats")).toBe(before);
  });

  it("when no file is sent, then 400 no_file", async () => {
    const res = await process_.post("/api/import/heats").set("Origin", t.env.BETTER_AUTH_URL).field("x", "y");
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("no_file");
  });

  it("when the file has none of the import's keys, then one error says it is probably the wrong file", async () => {
    const res = await upload("slabs", csv(["name", "colour"], [{ name: "a", colour: "b" }]), "other.csv", true);
    expect(res.body.errors).toHaveLength(1);
    expect(res.body.errors[0].message).toContain("None of the column names is a key of the slabs import");
  });
});

/**
 * Heats as exceljs's streaming writer writes them: every part with a data descriptor (its sizes after
 * its data) and [Content_Types].xml after the sheet, so file-type, which walks the local headers from
 * the front, must scan through the sheet's bytes before it meets the content types.
 */
async function streamedHeats(file: string, count: number) {
  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ filename: file, useStyles: false, useSharedStrings: false });
  const ws = wb.addWorksheet("Data");
  ws.addRow(HEAT_HEADERS).commit();
  for (let i = 0; i < count; i++) {
    const r = heat(i, { heat_no: `STR${String(i).padStart(5, "0")}`, sequence_no: `STRSEQ-${Math.floor(i / 8)}` });
    ws.addRow(HEAT_HEADERS.map((h) => r[h] ?? null)).commit();
  }
  ws.commit();
  await wb.commit();
}

describe("telling a workbook from other zip files", () => {
  it("when a streamed workbook's sheet packs to more than file-type's 1 MiB scan (it then answers only \"zip\"), then the zip's own directory makes it a workbook and every row is read", async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "streamed-"));
    // Found by halving the row count: with these rows the sheet part packs to just under 1 MiB
    // (less the parts before it) at 15,193 rows and just over at 15,194, where file-type 21 stops
    // scanning for the data descriptors. The zip time stamps play no part (file-type never reads them).
    const under = path.join(dir, "under.xlsx");
    const over = path.join(dir, "over.xlsx");
    await streamedHeats(under, 15_193);
    await streamedHeats(over, 15_194);
    expect((await fileTypeFromFile(under))?.ext).toBe("xlsx");
    expect((await fileTypeFromFile(over))?.ext, "the case this test is about: file-type no longer says zip for it").toBe("zip");

    for (const [file, count] of [
      [under, 15_193],
      [over, 15_194],
    ] as const) {
      const table = await readTable(file);
      expect(table.format).toBe("xlsx");
      expect(table.headers).toEqual(HEAT_HEADERS);
      expect(table.rows).toHaveLength(count);
      const last = table.rows.at(-1)!;
      expect(last.rowNo).toBe(count + 1);
      expect(last.cells.slice(0, 4)).toEqual([`STR${String(count - 1).padStart(5, "0")}`, `STRSEQ-${Math.floor((count - 1) / 8)}`, "CC2", "LV-ST32"]);
      expect(parseDateTime(last.cells[4]!)).toBe(Date.UTC(2026, 11, 1) + (count - 1) * 40 * 60_000);
      expect(last.cells.slice(6)).toEqual([1.4, 1545, 300, 160, 0.12, 0.2, 0.9, 0.015, 0.008]);
    }

    // And through the import itself (a dry run: nothing written).
    const before = n("select count(*) from heats");
    const res = await upload("heats", fs.readFileSync(over), "streamed.xlsx", true);
    expect(res.status, JSON.stringify(res.body).slice(0, 500)).toBe(200);
    expect(res.body).toMatchObject({
      dryRun: true,
      format: "xlsx",
      valid: true,
      rows: 15_194,
      counts: { created: 15_194, updated: 0, unchanged: 0 },
      errorCount: 0,
    });
    expect(n("select count(*) from heats")).toBe(before);
    fs.rmSync(dir, { recursive: true, force: true });
  });

  it("when the file is a zip without a workbook in it, then 415 says it is a zip archive", async () => {
    const res = await upload("heats", buildZip([{ name: "notes.txt", content: "heat_no,grade\nH1,LV-ST32\n" }]), "heats.xlsx");
    expect(res.status).toBe(415);
    expect(res.body.error).toMatchObject({ code: "unsupported_file", message: "This is a zip archive, not an .xlsx workbook." });
  });

  it("when a zip holds a workbook's parts but no [Content_Types].xml (no Office package), then 415 says it is a zip archive", async () => {
    const rels =
      '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">' +
      '<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/></Relationships>';
    const file = buildZip([
      {
        name: "xl/workbook.xml",
        content:
          '<workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets><sheet name="Data" sheetId="1" r:id="rId1"/></sheets></workbook>',
      },
      { name: "xl/_rels/workbook.xml.rels", content: rels },
      { name: "xl/worksheets/sheet1.xml", content: sheetXml(["heat_no"], '<row r="2"><c r="A2" t="inlineStr"><is><t>H1</t></is></c></row>') as string },
    ]);
    const res = await upload("heats", file, "heats.xlsx");
    expect(res.status).toBe(415);
    expect(res.body.error).toMatchObject({ code: "unsupported_file", message: "This is a zip archive, not an .xlsx workbook." });
  });

  it("when the zip is another Office package (a Word document), then 415 names its type", async () => {
    const file = buildZip([
      {
        name: "[Content_Types].xml",
        content:
          '<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">' +
          '<Override PartName="/word/document.xml" ContentType="application/vnd.openxmlformats-officedocument.wordprocessingml.document.main+xml"/></Types>',
      },
      { name: "word/document.xml", content: '<w:document xmlns:w="http://schemas.openxmlformats.org/wordprocessingml/2006/main"/>' },
    ]);
    const res = await upload("heats", file, "heats.xlsx");
    expect(res.status).toBe(415);
    expect(res.body.error.message).toBe("This file is a DOCX file, not a workbook. Upload an .xlsx workbook or a CSV file.");
  });
});

const SLAB_HEADERS = ["slab_id", "heat_no", "strand", "piece_no", "length_mm", "width_mm", "thickness_mm", "cast_length_start_m", "transition", "sen_depth_mm"];

describe("slabs import and per-slab conditions", () => {
  it("when slabs point to unknown heats or strands, or repeat, then each row is named and nothing written", async () => {
    const rows: Row[] = [
      { slab_id: "s-1", heat_no: "NOHEAT", strand: 1, piece_no: 1, length_mm: 10000, width_mm: 1500, thickness_mm: 230 },
      { slab_id: "S-2", heat_no: "IMP00000", strand: 7, piece_no: 1, length_mm: 10000, width_mm: 1500, thickness_mm: 230 },
      { slab_id: "S-3", heat_no: "IMP00000", strand: 1, piece_no: 1, length_mm: -5, width_mm: 1500, thickness_mm: 230 },
      { slab_id: "S-1", heat_no: "IMP00000", strand: 1, piece_no: 2, length_mm: 10000, width_mm: 1500, thickness_mm: 230 },
    ];
    const res = await upload("slabs", await xlsx(SLAB_HEADERS, rows), "slabs.xlsx");
    expect(res.status).toBe(422);
    const errs = res.body.error.details.errors;
    expect(errs).toContainEqual({ row: 2, column: "heat_no", message: "Heat NOHEAT is not on record. Import the heats first." });
    expect(errs).toContainEqual({ row: 3, column: "strand", message: "Strand 7 does not exist on the caster of heat IMP00000." });
    expect(errs).toContainEqual({ row: 4, column: "length_mm", message: "length_mm -5 is outside 500–25000 mm." });
    expect(errs).toContainEqual({ row: 5, column: "slab_id", message: "Slab S-1 appears twice in the file (first on row 2)." });
    expect(n("select count(*) from slabs where slab_id like 'S-%'")).toBe(0);
  });

  it("when slabs are imported (written by the import thread), then the very next report counts them: the server's report cache heard of them", async () => {
    const overview = async () => (await process_.get("/api/reports/overview?period=month&from=2026-12-01&to=2026-12-31")).body.totals.slabs as number;
    const before = await overview();
    const rows: Row[] = [
      { slab_id: "IMP00003-101", heat_no: "IMP00003", strand: 1, piece_no: 1, length_mm: 10000, width_mm: 1500, thickness_mm: 230 },
      { slab_id: "IMP00003-201", heat_no: "IMP00003", strand: 2, piece_no: 1, length_mm: 10000, width_mm: 1500, thickness_mm: 230 },
    ];
    const res = await upload("slabs", await xlsx(SLAB_HEADERS, rows), "cache.xlsx");
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(await overview()).toBe(before + 2);
  });

  it("when slabs are imported without samples, then the weight is computed and the conditions fall back to the heat", async () => {
    const rows: Row[] = [
      {
        slab_id: "imp00000-101",
        heat_no: "IMP00000",
        strand: 1,
        piece_no: 1,
        length_mm: 10000,
        width_mm: 1500,
        thickness_mm: 230,
        transition: "no",
        sen_depth_mm: 175,
      },
      { slab_id: "IMP00000-102", heat_no: "IMP00000", strand: 1, piece_no: 2, length_mm: 9000, width_mm: 1500, thickness_mm: 230, transition: true },
    ];
    const res = await upload("slabs", await xlsx(SLAB_HEADERS, rows), "slabs.xlsx");
    expect(res.status).toBe(201);
    expect(res.body.counts.created).toBe(2);
    expect(res.body.slabsResolved).toBe(2);
    const s = q("select * from slabs where slab_id = 'IMP00000-101'")!;
    // 10 m × 1.5 m × 0.23 m × 7.8 t/m³ = 26.91 t (geometry × density)
    expect(s.weight_t).toBeCloseTo(26.91, 3);
    expect(s.weight_source).toBe("computed");
    const c = q("select * from slab_conditions where slab_id = ?", s.id)!;
    expect(c).toMatchObject({
      casting_speed_m_min: 1.4,
      casting_speed_source: "heat",
      embr_current_a: 300,
      embr_current_source: "heat",
      sen_depth_mm: 175,
      sen_depth_source: "slab",
      sample_count: 0,
    });
    // Placed by time: piece 2 starts after piece 1's 10 m at 1.4 m/min = 428,571 ms after the heat start.
    const s2 = q("select cast_at, transition from slabs where slab_id = 'IMP00000-102'")!;
    expect(s2.cast_at).toBe(Date.UTC(2026, 11, 1, 0, 0) + Math.round((10 / 1.4) * 60_000));
    expect(s2.transition).toBe(1);
  });

  it("when process samples arrive for the slab's time on its strand, then its conditions come from them", async () => {
    // Four samples 20 s apart inside slab IMP00000-101's window (it is cast from 00:00:00 for 7.14 min).
    const start = Date.UTC(2026, 11, 1, 0, 0, 30);
    const levels = [-2, 1, 3, -1];
    const speeds = [1.38, 1.42, 1.46, 1.42];
    const rows: Row[] = levels.map((lv, i) => ({
      caster: "CC2",
      strand: 1,
      time: new Date(start + i * 20_000).toISOString(),
      casting_speed_m_min: speeds[i]!,
      tundish_temp_c: 1540 + i,
      embr_current_a: 400,
      mold_level_mm: lv,
    }));
    const headers = ["caster", "strand", "time", "casting_speed_m_min", "tundish_temp_c", "embr_current_a", "mold_level_mm"];
    const res = await upload("process-samples", csv(headers, rows), "samples.csv");
    expect(res.status).toBe(201);
    expect(res.body.counts.created).toBe(4);
    const id = n("select id from slabs where slab_id = 'IMP00000-101'");
    const c = q("select * from slab_conditions where slab_id = ?", id)!;
    expect(c.sample_count).toBe(4);
    expect(c.casting_speed_source).toBe("samples");
    expect(c.casting_speed_m_min).toBeCloseTo(1.42, 10);
    expect(c.speed_change_m_min).toBeCloseTo(0.08, 10);
    // Sample standard deviation of −2, 1, 3, −1 (mean 0.25): √((5.0625+0.5625+7.5625+1.5625)/3) = √4.9167 = 2.2174
    expect(c.mold_level_sd_mm).toBeCloseTo(2.2174, 4);
    // Mean tundish 1541.5 − liquidus 1519.89 = 21.61 °C
    expect(c.superheat_c).toBeCloseTo(21.61, 2);
    expect(c.superheat_source).toBe("samples");
    // The per-slab value given on import still wins over the samples.
    expect(c.sen_depth_source).toBe("slab");
    // Strand 1's linear calibration (0.75 mT/A): 400 A → 0.3 T
    expect(c.embr_field_t).toBeCloseTo(0.3, 10);
    const again = await upload("process-samples", csv(headers, rows), "samples.csv");
    expect(again.body.counts).toEqual({ created: 0, updated: 0, unchanged: 4 });
  });
});

describe("templates", () => {
  it("when a template is downloaded, then its first sheet has the keys and its second describes each column with its unit", async () => {
    const res = await process_
      .get("/api/import/templates/heats.xlsx")
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on("data", (c: Buffer) => chunks.push(c));
        r.on("end", () => cb(null, Buffer.concat(chunks)));
      });
    expect(res.status).toBe(200);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(res.body as never);
    const [data, about] = wb.worksheets;
    expect((data!.getRow(1).values as unknown[]).slice(1)).toContain("casting_speed_m_min");
    const speed = about!.getRows(2, about!.rowCount)!.find((r) => r.getCell(1).value === "casting_speed_m_min")!;
    expect(speed.getCell(2).value).toBe("yes");
    expect(speed.getCell(4).value).toBe("m/min");
    expect(speed.getCell(5).value).toBe("0.1 … 10");
  });
});

describe("level-2 feed", () => {
  it("when the feed posts with a token, then it imports; repeating changes nothing; a revoked token gets 401", async () => {
    const admin = await t.agentFor("admin");
    const created = await admin.post("/api/admin/tokens").set("Origin", t.env.BETTER_AUTH_URL).send({ name: "L2 gateway" });
    expect(created.status).toBe(201);
    const token = created.body.token as string;
    expect(token).toMatch(/^ssk_/);
    expect(n("select count(*) from api_tokens where token_hash = ?", token)).toBe(0); // stored hashed only
    const body = [heat(900), heat(901)].map((r) => ({ ...r, cast_start: (r.cast_start as Date).toISOString(), cast_end: (r.cast_end as Date).toISOString() }));
    const { default: supertest } = await import("supertest");
    const first = await supertest(t.app).post("/api/ingest/heats").set("Authorization", `Bearer ${token}`).send(body);
    expect(first.status).toBe(201);
    expect(first.body.counts).toEqual({ created: 2, updated: 0, unchanged: 0 });
    const second = await supertest(t.app).post("/api/ingest/heats").set("Authorization", `Bearer ${token}`).send(body);
    expect(second.body.counts).toEqual({ created: 0, updated: 0, unchanged: 2 });
    expect(q("select actor from audit_log where action = 'import.heats' order by id desc limit 1")!.actor).toBe("token:L2 gateway");
    const bad = await supertest(t.app)
      .post("/api/ingest/heats")
      .set("Authorization", `Bearer ${token}`)
      .send([{ ...body[0], casting_speed_m_min: -1 }]);
    expect(bad.status).toBe(422);
    expect(bad.body.error.details.errors[0]).toMatchObject({ row: 1, column: "casting_speed_m_min" });
    const revoked = await admin.delete(`/api/admin/tokens/${created.body.id}`).set("Origin", t.env.BETTER_AUTH_URL);
    expect(revoked.status).toBe(200);
    expect(revoked.body.revokedAt).not.toBeNull();
    const after = await supertest(t.app).post("/api/ingest/heats").set("Authorization", `Bearer ${token}`).send(body);
    expect(after.status).toBe(401);
  });

  it("when the feed is called with a session cookie and no token, then 401: the feed takes tokens only", async () => {
    const res = await process_
      .post("/api/ingest/heats")
      .set("Origin", t.env.BETTER_AUTH_URL)
      .send([heat(950)]);
    expect(res.status).toBe(401);
  });
});
