/**
 * The bounded workbook reader on hand-made SpreadsheetML (ECMA-376 part 1): the forms other writers
 * than Excel produce, and the malformed ones an attacker sends. Larger payloads are in
 * tests/hostile/import-bombs.test.ts.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { IMPORT_LIMITS } from "@shared/api/imports";
import { parseDateTime } from "../../server/import/coerce";
import { readXlsxFile } from "../../server/import/read-xlsx";
import { buildZip, sheetXml, workbookZip } from "../helpers/zip-bombs";

const dir = fs.mkdtempSync(path.join(os.tmpdir(), "read-xlsx-"));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));
let n = 0;
const write = (buf: Buffer) => {
  const file = path.join(dir, `w${n++}.xlsx`);
  fs.writeFileSync(file, buf);
  return file;
};
const NS = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"';

describe("what the reader understands", () => {
  it("when cells use shared strings with rich runs and phonetic hints, inline strings, CDATA, booleans, errors and formulas, then each comes back as its value", async () => {
    const sst = `<sst ${NS}><si><t>plain</t></si><si><r><t>ri</t></r><r><t>ch</t></r><rPh sb="0" eb="1"><t>PHONETIC</t></rPh></si></sst>`;
    const rows =
      `<row r="2"><c r="A2" t="s"><v>0</v></c><c r="B2" t="s"><v>1</v></c><c r="C2" t="inlineStr"><is><t><![CDATA[a<b]]></t></is></c>` +
      `<c r="D2" t="b"><v>1</v></c><c r="E2" t="e"><v>#N/A</v></c><c r="F2"><f>1+1</f><v>2</v></c><c r="G2"><f>A1</f></c><c r="H2" t="str"><f>"x"</f><v>x</v></c></row>`;
    const t = await readXlsxFile(write(workbookZip(sheetXml(["a", "b", "c", "d", "e", "f", "g", "h"], rows), { sharedStrings: sst })));
    expect(t.headers).toEqual(["a", "b", "c", "d", "e", "f", "g", "h"]);
    expect(t.rows).toEqual([{ rowNo: 2, cells: ["plain", "rich", "a<b", true, { cellError: "#N/A" }, 2, { formulaWithoutValue: true }, "x"] }]);
  });

  it("when the XML uses a namespace prefix and leaves out cell references, then cells fall in order and gaps stay empty", async () => {
    const sheet =
      `<?xml version="1.0"?><x:worksheet xmlns:x="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><x:sheetData>` +
      `<x:row><x:c t="inlineStr"><x:is><x:t>k1</x:t></x:is></x:c><x:c t="inlineStr"><x:is><x:t>k2</x:t></x:is></x:c><x:c r="D1" t="inlineStr"><x:is><x:t>k4</x:t></x:is></x:c></x:row>` +
      `<x:row><x:c><x:v>1.5</x:v></x:c><x:c r="D2"><x:v>4</x:v></x:c></x:row><x:row/><x:row><x:c><x:v>7</x:v></x:c></x:row>` +
      `</x:sheetData></x:worksheet>`;
    const t = await readXlsxFile(write(workbookZip(sheet)));
    expect(t.headers).toEqual(["k1", "k2", "", "k4"]);
    // Row 3 is blank and skipped; rows are numbered as a spreadsheet shows them.
    expect(t.rows).toEqual([
      { rowNo: 2, cells: [1.5, null, null, 4] },
      { rowNo: 4, cells: [7] },
    ]);
  });

  it("when the workbook counts dates from 1904, then it says so and the date columns read its serial days right", async () => {
    const file = buildZip([
      { name: "[Content_Types].xml", content: `<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"/>` },
      {
        name: "xl/workbook.xml",
        content: `<workbook ${NS} xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><workbookPr date1904="1"/><sheets><sheet name="S" sheetId="1" r:id="rId7"/></sheets></workbook>`,
      },
      {
        name: "xl/_rels/workbook.xml.rels",
        content: `<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId7" Type="x/worksheet" Target="/xl/worksheets/data.xml"/></Relationships>`,
      },
      { name: "xl/worksheets/data.xml", content: sheetXml(["cast_start"], `<row r="2"><c r="A2"><v>44896.5</v></c></row>`) as string },
    ]);
    const t = await readXlsxFile(write(file));
    expect(t.date1904).toBe(true);
    // 44,896.5 days after 1904-01-01 (ECMA-376 §18.17.4.1) is 2026-12-02 12:00 UTC.
    expect(parseDateTime(t.rows[0]!.cells[0]!, true)).toBe(Date.UTC(2026, 11, 2, 12));
  });
});

describe("what the reader refuses", () => {
  it("when elements nest deeper than SpreadsheetML does, then 415", async () => {
    const sheet = `<worksheet ${NS}><sheetData>${"<x>".repeat(200)}${"</x>".repeat(200)}</sheetData></worksheet>`;
    await expect(readXlsxFile(write(workbookZip(sheet)))).rejects.toMatchObject({ status: 415, message: expect.stringContaining("nested too deeply") });
  });

  it("when the XML declares its own entities (a billion-laughs document), then they are not expanded: 415", async () => {
    const sheet = `<?xml version="1.0"?><!DOCTYPE w [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;">]><worksheet ${NS}><sheetData><row r="1"><c t="inlineStr"><is><t>&b;</t></is></c></row></sheetData></worksheet>`;
    await expect(readXlsxFile(write(workbookZip(sheet)))).rejects.toMatchObject({ status: 415 });
  });

  it("when the zip has no workbook part, then 415 says it is a zip archive", async () => {
    const file = buildZip([{ name: "notes.txt", content: "hello" }]);
    await expect(readXlsxFile(write(file))).rejects.toMatchObject({ status: 415, message: "This is a zip archive, not an .xlsx workbook." });
  });

  it("when a limit is lowered, then the reader stops at it while streaming (rows, cells, shared texts)", async () => {
    const rows = Array.from({ length: 30 }, (_, i) => `<row r="${i + 2}"><c><v>${i}</v></c><c><v>${i}</v></c></row>`).join("");
    const file = write(workbookZip(sheetXml(["a", "b"], rows)));
    await expect(readXlsxFile(file, { ...IMPORT_LIMITS, rows: 20 })).rejects.toMatchObject({
      status: 413,
      message: expect.stringContaining("more than 20 data rows"),
    });
    await expect(readXlsxFile(file, { ...IMPORT_LIMITS, cells: 40 })).rejects.toMatchObject({
      status: 413,
      message: expect.stringContaining("more than 40 filled cells"),
    });
    const sst = `<sst ${NS}>${"<si><t>t</t></si>".repeat(50)}</sst>`;
    const withShared = write(workbookZip(sheetXml(["a"], `<row r="2"><c t="s"><v>0</v></c></row>`), { sharedStrings: sst }));
    await expect(readXlsxFile(withShared, { ...IMPORT_LIMITS, cells: 40 })).rejects.toMatchObject({
      status: 413,
      message: expect.stringContaining("more than 40 different texts"),
    });
    expect((await readXlsxFile(file)).rows).toHaveLength(30);
  });
});
