import ExcelJS from "exceljs";

export type Row = Record<string, string | number | boolean | Date | null | { formula: string; result?: number }>;

/** A real .xlsx built with exceljs: first sheet = the header and rows given. */
export async function xlsx(headers: string[], rows: Row[], extraSheets: string[] = []): Promise<Buffer> {
  const wb = new ExcelJS.Workbook();
  const ws = wb.addWorksheet("Data");
  ws.addRow(headers);
  for (const r of rows) ws.addRow(headers.map((h) => (r[h] === undefined ? null : r[h])));
  for (const name of extraSheets) wb.addWorksheet(name).addRow(["not data"]);
  return Buffer.from(await wb.xlsx.writeBuffer());
}

/** CSV text as a plant's spreadsheet would write it (; and decimal comma for European settings). */
export function csv(headers: string[], rows: Row[], sep = ",", decimalComma = false): Buffer {
  const cell = (v: Row[string]) => {
    if (v === null || v === undefined) return "";
    if (v instanceof Date) return v.toISOString();
    if (typeof v === "object") return String(v.result ?? "");
    const s = typeof v === "number" && decimalComma ? String(v).replace(".", ",") : String(v);
    return /[",;\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
  };
  const lines = [headers.join(sep), ...rows.map((r) => headers.map((h) => cell(r[h] ?? null)).join(sep))];
  return Buffer.from(lines.join("\r\n") + "\r\n", "utf8");
}

/** Heat-import keys for files of many invented heats (fault drills). */
export const HEAT_FILE_HEADERS = [
  "heat_no",
  "sequence_no",
  "caster",
  "grade",
  "cast_start",
  "cast_end",
  "casting_speed_m_min",
  "tundish_temp_c",
  "c_pct",
  "si_pct",
  "mn_pct",
  "p_pct",
  "s_pct",
];

/** The i-th invented heat of a file, numbered under `prefix`: 40 min apart from 2027-01-01, 8 to a sequence. */
export const heatFileRow = (prefix: string, i: number): Row => ({
  heat_no: `${prefix}${String(i).padStart(6, "0")}`,
  sequence_no: `${prefix}SEQ-${Math.floor(i / 8)}`,
  caster: "CC2",
  grade: "LV-ST32",
  cast_start: new Date(Date.UTC(2027, 0, 1, 0, 0) + i * 40 * 60_000),
  cast_end: new Date(Date.UTC(2027, 0, 1, 0, 32) + i * 40 * 60_000),
  casting_speed_m_min: 1.4,
  tundish_temp_c: 1545,
  c_pct: 0.12,
  si_pct: 0.2,
  mn_pct: 0.9,
  p_pct: 0.015,
  s_pct: 0.008,
});

/** supertest parser that keeps a binary answer (an .xlsx, a photo) as one Buffer. */
export function binaryBody(res: import("supertest").Response, cb: (err: Error | null, body: Buffer) => void) {
  const stream = res as unknown as NodeJS.ReadableStream;
  const chunks: Buffer[] = [];
  stream.on("data", (c: Buffer) => chunks.push(c));
  stream.on("end", () => cb(null, Buffer.concat(chunks)));
}

/** GET an .xlsx through a supertest agent, expect 200, and open it with exceljs. */
export async function downloadWorkbook(agent: { get(path: string): import("supertest").Test }, path: string): Promise<ExcelJS.Workbook> {
  const res = await agent
    .get(path)
    .buffer(true)
    .parse(binaryBody as never);
  if (res.status !== 200) throw new Error(`GET ${path} answered ${res.status}: ${JSON.stringify(res.body).slice(0, 300)}`);
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load(res.body as never);
  return wb;
}
