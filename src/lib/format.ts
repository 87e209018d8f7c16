/** Number and date formatting shared by every screen: a number always carries its unit, a gap shows as "—". */

export const DASH = "—";

export function num(value: number | null | undefined, digits = 0): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return DASH;
  return value.toLocaleString("en-GB", { minimumFractionDigits: digits, maximumFractionDigits: digits });
}

/** "1.66 m/min"; a dimensionless unit ("–" or "") shows the bare number. */
export function withUnit(value: number | null | undefined, unit: string, digits = 0): string {
  const n = num(value, digits);
  if (n === DASH || !unit || unit === "–") return n;
  return `${n} ${unit}`;
}

export function dateTime(iso: string | null | undefined): string {
  if (!iso) return DASH;
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return DASH;
  return d.toLocaleString("en-GB", { day: "numeric", month: "short", year: "numeric", hour: "2-digit", minute: "2-digit" });
}

export function date(iso: string | null | undefined): string {
  if (!iso) return DASH;
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return DASH;
  return d.toLocaleDateString("en-GB", { day: "numeric", month: "short", year: "numeric" });
}

export function time(iso: string | null | undefined): string {
  if (!iso) return DASH;
  return new Date(iso).toLocaleTimeString("en-GB", { hour: "2-digit", minute: "2-digit" });
}

/** Plural with its count: plural(3, "slab") → "3 slabs". */
export function plural(n: number, one: string, many = `${one}s`): string {
  return `${n.toLocaleString("en-GB")} ${n === 1 ? one : many}`;
}

export function bytes(n: number): string {
  if (n < 1024) return `${n} B`;
  if (n < 1024 * 1024) return `${(n / 1024).toFixed(0)} kB`;
  return `${(n / 1024 / 1024).toFixed(1)} MB`;
}

/** A fraction 0…1 as a percentage: pct(0.0535) → "5.35 %". */
export function pct(value: number | null | undefined, digits = 2): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return DASH;
  return `${(value * 100).toLocaleString("en-GB", { minimumFractionDigits: digits, maximumFractionDigits: digits })} %`;
}

/** A 95 % interval of two fractions: "4.99–5.71 %". */
export function pctRange(lower: number | null | undefined, upper: number | null | undefined, digits = 2): string {
  if (lower === null || lower === undefined || upper === null || upper === undefined || !Number.isFinite(lower) || !Number.isFinite(upper)) return DASH;
  const f = (v: number) => (v * 100).toLocaleString("en-GB", { minimumFractionDigits: digits, maximumFractionDigits: digits });
  return `${f(lower)}–${f(upper)} %`;
}

const SUPERSCRIPT: Record<string, string> = { "-": "⁻", "0": "⁰", "1": "¹", "2": "²", "3": "³", "4": "⁴", "5": "⁵", "6": "⁶", "7": "⁷", "8": "⁸", "9": "⁹" };

/**
 * A p-value as a statistician reads it: four decimals down to 0.001, then a power of ten
 * (3.6 × 10⁻⁴), and below double precision "< 10⁻¹⁵" rather than a false exact zero.
 */
export function pValue(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return DASH;
  if (p >= 0.001) return p.toLocaleString("en-GB", { minimumFractionDigits: 4, maximumFractionDigits: 4 });
  if (p < 1e-15) return "< 10⁻¹⁵";
  const [mant, exp] = p.toExponential(1).split("e");
  return `${mant} × 10${String(Number(exp)).replace(/./g, (c) => SUPERSCRIPT[c] ?? c)}`;
}

/** A number with a fixed count of significant digits, for statistics of any size (odds ratios, ρ). */
export function sig(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return DASH;
  if (value !== 0 && (Math.abs(value) >= 1e6 || Math.abs(value) < 1e-4)) return value.toExponential(digits - 1);
  return Number(value.toPrecision(digits)).toLocaleString("en-GB", { maximumFractionDigits: 10 });
}

/** "Casting speed" → "casting speed" inside a sentence; "EMBr current" and "SEN depth" keep their capitals. */
export function lowerFirst(label: string): string {
  return /^[A-Z][a-z]/.test(label) ? label[0]!.toLowerCase() + label.slice(1) : label;
}

/** A calendar day given as YYYY-MM-DD (a claim's date received): shown as that day in every time zone. */
export function day(ymd: string | null | undefined): string {
  const m = ymd ? /^(\d{4})-(\d{2})-(\d{2})$/.exec(ymd) : null;
  if (!m) return date(ymd);
  return new Date(Number(m[1]), Number(m[2]) - 1, Number(m[3])).toLocaleDateString("en-GB", { day: "numeric", month: "short", year: "numeric" });
}
