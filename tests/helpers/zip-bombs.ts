/**
 * Hostile workbooks for the hostile-files suite, built in the test: a zip written by hand (PKWARE
 * APPNOTE 6.3 §4.3: local headers, data, central directory, end record) so an entry can unpack to
 * gigabytes from a few MB, and so the sizes it declares can lie.
 *
 * Big entries are made without deflating gigabytes: a deflate stream cut with Z_FULL_FLUSH resets
 * the compressor's history (RFC 1951 allows a new block to start anywhere), so one compressed chunk
 * repeated n times is the valid stream of the chunk's text repeated n times.
 */
import zlib from "node:zlib";

/** Text given as a head, a body repeated `times`, and a tail. */
export interface RepeatedText {
  head: string;
  body: string;
  times: number;
  tail: string;
}

export interface BombEntry {
  name: string;
  content: string | RepeatedText;
  /** Declare this uncompressed size instead of the true one (a forged entry). */
  declareSize?: number;
}

const full = (text: string) => zlib.deflateRawSync(Buffer.from(text, "utf8"), { level: 9, finishFlush: zlib.constants.Z_FULL_FLUSH });

function compress(content: string | RepeatedText): { data: Buffer; size: number; crc: number } {
  if (typeof content === "string") {
    const raw = Buffer.from(content, "utf8");
    return { data: zlib.deflateRawSync(raw, { level: 9 }), size: raw.length, crc: zlib.crc32(raw) };
  }
  const head = full(content.head);
  const body = full(content.body);
  const tail = zlib.deflateRawSync(Buffer.from(content.tail, "utf8"), { level: 9 });
  const parts: Buffer[] = [head];
  for (let i = 0; i < content.times; i++) parts.push(body);
  parts.push(tail);
  const bodyBytes = Buffer.from(content.body, "utf8");
  // The CRC of the whole text, built from the CRC of each piece.
  let crc = zlib.crc32(content.head);
  for (let i = 0; i < content.times; i++) crc = zlib.crc32(bodyBytes, crc);
  crc = zlib.crc32(content.tail, crc);
  const size = Buffer.byteLength(content.head) + bodyBytes.length * content.times + Buffer.byteLength(content.tail);
  return { data: Buffer.concat(parts), size, crc };
}

/** A zip of deflated entries (sizes below 4 GiB: no ZIP64 needed). */
export function buildZip(entries: BombEntry[]): Buffer {
  const locals: Buffer[] = [];
  const centrals: Buffer[] = [];
  let offset = 0;
  for (const e of entries) {
    const { data, size, crc } = compress(e.content);
    const declared = e.declareSize ?? size;
    if (declared > 0xffffffff || data.length > 0xffffffff) throw new Error("entry too large for a plain zip");
    const name = Buffer.from(e.name, "utf8");
    const local = Buffer.alloc(30);
    local.writeUInt32LE(0x04034b50, 0);
    local.writeUInt16LE(20, 4); // version needed
    local.writeUInt16LE(0x0800, 6); // UTF-8 names
    local.writeUInt16LE(8, 8); // deflate
    local.writeUInt16LE(0, 10);
    local.writeUInt16LE(0x5b21, 12); // 2025-09-01
    local.writeUInt32LE(crc, 14);
    local.writeUInt32LE(data.length, 18);
    local.writeUInt32LE(declared, 22);
    local.writeUInt16LE(name.length, 26);
    local.writeUInt16LE(0, 28);
    locals.push(local, name, data);
    const central = Buffer.alloc(46);
    central.writeUInt32LE(0x02014b50, 0);
    central.writeUInt16LE(20, 4);
    central.writeUInt16LE(20, 6);
    central.writeUInt16LE(0x0800, 8);
    central.writeUInt16LE(8, 10);
    central.writeUInt16LE(0, 12);
    central.writeUInt16LE(0x5b21, 14);
    central.writeUInt32LE(crc, 16);
    central.writeUInt32LE(data.length, 20);
    central.writeUInt32LE(declared, 24);
    central.writeUInt16LE(name.length, 28);
    central.writeUInt32LE(offset, 42);
    centrals.push(central, name);
    offset += 30 + name.length + data.length;
  }
  const cd = Buffer.concat(centrals);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(entries.length, 8);
  end.writeUInt16LE(entries.length, 10);
  end.writeUInt32LE(cd.length, 12);
  end.writeUInt32LE(offset, 16);
  return Buffer.concat([...locals, cd, end]);
}

const NS = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"';
const REL_NS = 'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"';

/** The parts every workbook has, around a first sheet (and shared strings) given by the caller. */
export function workbookZip(
  sheet: string | RepeatedText,
  opts: { sharedStrings?: string | RepeatedText; declareSheetSize?: number; declareSharedSize?: number } = {},
): Buffer {
  const entries: BombEntry[] = [
    {
      name: "[Content_Types].xml",
      content:
        '<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">' +
        '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" ContentType="application/xml"/>' +
        '<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>' +
        '<Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>' +
        (opts.sharedStrings
          ? '<Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"/>'
          : "") +
        "</Types>",
    },
    {
      name: "_rels/.rels",
      content:
        '<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">' +
        '<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/></Relationships>',
    },
    {
      name: "xl/workbook.xml",
      content: `<?xml version="1.0" encoding="UTF-8"?><workbook ${NS} ${REL_NS}><sheets><sheet name="Data" sheetId="1" r:id="rId1"/></sheets></workbook>`,
    },
    {
      name: "xl/_rels/workbook.xml.rels",
      content:
        '<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">' +
        '<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/>' +
        (opts.sharedStrings
          ? '<Relationship Id="rId2" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/sharedStrings" Target="sharedStrings.xml"/>'
          : "") +
        "</Relationships>",
    },
    { name: "xl/worksheets/sheet1.xml", content: sheet, declareSize: opts.declareSheetSize },
  ];
  if (opts.sharedStrings) entries.push({ name: "xl/sharedStrings.xml", content: opts.sharedStrings, declareSize: opts.declareSharedSize });
  return buildZip(entries);
}

const colName = (i: number) => {
  let s = "";
  for (let n = i + 1; n > 0; n = Math.floor((n - 1) / 26)) s = String.fromCharCode(65 + ((n - 1) % 26)) + s;
  return s;
};

/** A sheet's XML: the header row (inline strings) and whatever rows follow. */
export function sheetXml(headers: string[], rows: string | { body: string; times: number }): string | RepeatedText {
  const headerRow = `<row r="1">${headers.map((h, i) => `<c r="${colName(i)}1" t="inlineStr"><is><t>${h}</t></is></c>`).join("")}</row>`;
  const head = `<?xml version="1.0" encoding="UTF-8"?><worksheet ${NS}><sheetData>${headerRow}`;
  const tail = "</sheetData></worksheet>";
  return typeof rows === "string" ? head + rows + tail : { head, body: rows.body, times: rows.times, tail };
}
