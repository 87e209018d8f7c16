/** Period labels (day, ISO week, month) and counts of slabs per period. */
import type { Scanned } from "./scope";

const DAY = 86_400_000;
/** Period label of a time: the UTC day, the ISO week (2026-W48) or the month. */
export function periodOf(ms: number, period: "day" | "week" | "month"): string {
  const d = new Date(ms);
  if (period === "day") return d.toISOString().slice(0, 10);
  if (period === "month") return d.toISOString().slice(0, 7);
  // ISO 8601 week: the week with the year's first Thursday is week 1.
  const day = (d.getUTCDay() + 6) % 7;
  const thursday = new Date(Date.UTC(d.getUTCFullYear(), d.getUTCMonth(), d.getUTCDate() - day + 3));
  const firstThursday = new Date(Date.UTC(thursday.getUTCFullYear(), 0, 4));
  const week = 1 + Math.round((thursday.getTime() - firstThursday.getTime()) / DAY / 7 - ((firstThursday.getUTCDay() + 6) % 7 - 3) / 7);
  return `${thursday.getUTCFullYear()}-W${String(week).padStart(2, "0")}`;
}

/** Counts per period label, in label order; labels are memoised per UTC day. */
export function byPeriod(s: Scanned, period: "day" | "week" | "month", weight = false) {
  const labelOfDay = new Map<number, string>();
  const map = new Map<string, { n: number; x: number; t: number }>();
  for (const i of s.rows) {
    const at = s.facts.castAt[i]!;
    if (at !== at) continue;
    const dayNo = Math.floor(at / DAY);
    let label = labelOfDay.get(dayNo);
    if (!label) labelOfDay.set(dayNo, (label = periodOf(dayNo * DAY, period)));
    let c = map.get(label);
    if (!c) map.set(label, (c = { n: 0, x: 0, t: 0 }));
    c.n++;
    c.x += s.affected[i]!;
    if (weight) c.t += s.facts.weightT[i]! || 0;
  }
  return [...map.entries()].sort(([a], [b]) => a.localeCompare(b)).map(([label, c]) => ({ period: label, ...c }));
}
