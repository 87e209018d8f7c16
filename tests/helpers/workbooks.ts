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
