/** Number and date formatting shared by every screen: a number always carries its unit, a gap shows as "—". */

export const DASH = "—";

/*
 * The formatters, made once and kept: `x.toLocaleString(locale, options)` builds a new Intl formatter
 * on every call (the language specifies it as `new Intl.NumberFormat(locale, options).format(x)`),
 * and a report's tables call it thousands of times while the screen is first drawn. Same text.
 */
let LOCALE = "en-GB";
const numberFormats = new Map<string, Intl.NumberFormat>();
const dateFormats = new Map<string, Intl.DateTimeFormat>();

/**
 * The locale numbers and dates are written in: the person's language (German: decimal comma, "3. Dez.
 * 2026"); English and the pseudo-locale as British English. Called when the language changes.
 */
export function setFormatLocale(language: string) {
  const next = language === "de" ? "de-DE" : "en-GB";
  if (next === LOCALE) return;
  LOCALE = next;
  numberFormats.clear();
  dateFormats.clear();
}

/** The BCP 47 locale numbers and dates are written in now ("en-GB", "de-DE"), for an `Intl` call of a screen's own. */
export const formatLocale = () => LOCALE;

function numberFormat(minimumFractionDigits?: number, maximumFractionDigits?: number): Intl.NumberFormat {
  const key = `${minimumFractionDigits}:${maximumFractionDigits}`;
  let f = numberFormats.get(key);
  if (!f) numberFormats.set(key, (f = new Intl.NumberFormat(LOCALE, { minimumFractionDigits, maximumFractionDigits })));
  return f;
}
const fixed = (value: number, digits: number) => numberFormat(digits, digits).format(value);
const dateFormat = (key: string, options: Intl.DateTimeFormatOptions) => () => {
  let f = dateFormats.get(key);
  if (!f) dateFormats.set(key, (f = new Intl.DateTimeFormat(LOCALE, options)));
  return f;
};
const DATE_TIME = dateFormat("dateTime", { day: "numeric", month: "short", year: "numeric", hour: "2-digit", minute: "2-digit" });
const DATE = dateFormat("date", { day: "numeric", month: "short", year: "numeric" });
const TIME = dateFormat("time", { hour: "2-digit", minute: "2-digit" });

export function num(value: number | null | undefined, digits = 0): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return DASH;
  return fixed(value, digits);
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
  return DATE_TIME().format(d);
}

export function date(iso: string | null | undefined): string {
  if (!iso) return DASH;
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return DASH;
  return DATE().format(d);
}

export function time(iso: string | null | undefined): string {
  if (!iso) return DASH;
  return TIME().format(new Date(iso));
}

/**
 * A count in the person's locale ("15,852"; German "15.852"), from the formatter made once: a
 * report's tables and figures write a few hundred counts while the screen is first drawn.
 */
export function count(n: number): string {
  return numberFormat().format(n);
}

/** Plural with its count: plural(3, "slab") → "3 slabs". */
export function plural(n: number, one: string, many = `${one}s`): string {
  return `${numberFormat().format(n)} ${n === 1 ? one : many}`;
}

export function bytes(n: number): string {
  if (n < 1024) return `${n} B`;
  if (n < 1024 * 1024) return `${fixed(n / 1024, 0)} kB`;
  return `${fixed(n / 1024 / 1024, 1)} MB`;
}

/** A fraction 0…1 as a percentage: pct(0.0535) → "5.35 %". */
export function pct(value: number | null | undefined, digits = 2): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return DASH;
  return `${fixed(value * 100, digits)} %`;
}

/** A 95 % interval of two fractions: "4.99–5.71 %". */
export function pctRange(lower: number | null | undefined, upper: number | null | undefined, digits = 2): string {
  if (lower === null || lower === undefined || upper === null || upper === undefined || !Number.isFinite(lower) || !Number.isFinite(upper)) return DASH;
  const f = (v: number) => fixed(v * 100, digits);
  return `${f(lower)}–${f(upper)} %`;
}

const SUPERSCRIPT: Record<string, string> = { "-": "⁻", "0": "⁰", "1": "¹", "2": "²", "3": "³", "4": "⁴", "5": "⁵", "6": "⁶", "7": "⁷", "8": "⁸", "9": "⁹" };

/**
 * A p-value as a statistician reads it: four decimals down to 0.001, then a power of ten
 * (3.6 × 10⁻⁴), and below double precision "< 10⁻¹⁵" rather than a false exact zero.
 */
export function pValue(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return DASH;
  if (p >= 0.001) return fixed(p, 4);
  if (p < 1e-15) return "< 10⁻¹⁵";
  const [mant, exp] = p.toExponential(1).split("e");
  return `${fixed(Number(mant), 1)} × 10${String(Number(exp)).replace(/./g, (c) => SUPERSCRIPT[c] ?? c)}`;
}

/** A number with a fixed count of significant digits, for statistics of any size (odds ratios, ρ). */
export function sig(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return DASH;
  if (value !== 0 && (Math.abs(value) >= 1e6 || Math.abs(value) < 1e-4)) return value.toExponential(digits - 1);
  return numberFormat(undefined, 10).format(Number(value.toPrecision(digits)));
}

/** "Casting speed" → "casting speed" inside a sentence; "EMBr current" and "SEN depth" keep their capitals. */
export function lowerFirst(label: string): string {
  return /^[A-Z][a-z]/.test(label) ? label[0]!.toLowerCase() + label.slice(1) : label;
}

/** A calendar day given as YYYY-MM-DD (a claim's date received): shown as that day in every time zone. */
export function day(ymd: string | null | undefined): string {
  const m = ymd ? /^(\d{4})-(\d{2})-(\d{2})$/.exec(ymd) : null;
  if (!m) return date(ymd);
  return DATE().format(new Date(Number(m[1]), Number(m[2]) - 1, Number(m[3])));
}

/**
 * A number as a person types it, in either decimal style: "0.75" and "0,75" (German) both read 0.75.
 * A comma counts as the decimal mark only where the text has no point and one comma, so "1,234.5" is
 * not taken for a fraction; anything else is read as JavaScript reads it (NaN when it is no number).
 */
export function parseDecimal(text: string): number {
  const s = text.trim();
  if (s === "") return Number.NaN;
  return Number(!s.includes(".") && s.split(",").length === 2 ? s.replace(",", ".") : s);
}
