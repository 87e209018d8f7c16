import { xlsx } from "./tests/helpers/workbooks";
import { fileTypeFromBuffer } from "file-type";
const HEAT_HEADERS = ["heat_no", "sequence_no", "caster", "grade", "cast_start", "cast_end", "casting_speed_m_min", "tundish_temp_c", "embr_current_a", "sen_depth_mm", "c_pct", "si_pct", "mn_pct", "p_pct", "s_pct"];
const heat = (i: number) => ({ heat_no: `IMP${String(i).padStart(5, "0")}`, sequence_no: `IMPSEQ-${Math.floor(i / 8)}`, caster: "CC2", grade: "LV-ST32",
  cast_start: new Date(Date.UTC(2026, 11, 1, 0, 0) + i * 40 * 60_000), cast_end: new Date(Date.UTC(2026, 11, 1, 0, 32) + i * 40 * 60_000),
  casting_speed_m_min: 1.4, tundish_temp_c: 1545, embr_current_a: 300, sen_depth_mm: 160, c_pct: 0.12, si_pct: 0.2, mn_pct: 0.9, p_pct: 0.015, s_pct: 0.008 });
const base = await xlsx(HEAT_HEADERS, [0,1,2].map(heat));
// find header offsets
const locals: number[] = [], centrals: number[] = [];
for (let i = 0; i < base.length - 4; i++) { const s = base.readUInt32LE(i); if (s === 0x04034b50) locals.push(i); if (s === 0x02014b50) centrals.push(i); }
console.log(locals.length, centrals.length);
const counts: Record<string, number> = {};
const bad: number[] = [];
for (let day = 1; day <= 2; day++) for (let t = 0; t < 65536; t += 1) {
  const h = t >> 11, m = (t >> 5) & 63; if (h > 23 || m > 59 || (t & 31) > 29) continue;
  const b = Buffer.from(base);
  const date = ((2026 - 1980) << 9) | (12 << 5) | day;
  for (const o of locals) { b.writeUInt16LE(t, o + 10); b.writeUInt16LE(date, o + 12); }
  for (const o of centrals) { b.writeUInt16LE(t, o + 12); b.writeUInt16LE(date, o + 14); }
  const ft = await fileTypeFromBuffer(b);
  const k = ft?.ext ?? "none"; counts[k] = (counts[k] ?? 0) + 1; if (k !== "xlsx" && bad.length < 5) bad.push(t);
}
console.log(counts, bad.map(t => `${t>>11}:${(t>>5)&63}:${(t&31)*2}`));
