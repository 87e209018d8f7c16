/** Number and date formatting shared by every screen: a number always carries its unit, a gap shows as "—". */
import { localeOf } from "@shared/i18n/languages";

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
  const next = localeOf(language);
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
 * A number as a person types it, read in the language's style with the other style's decimal mark
 * understood too: English "1,200" → 1200 and "1,234.5" → 1234.5; German "1.234" → 1234 and
 * "1.234,5" → 1234.5; "0.75" and "0,75" → 0.75 in both. The language's thousands mark counts only
 * between whole groups of three digits ("1,200", "12.345.678"); one mark of the other kind that is
 * no such grouping is a decimal mark ("0.75" in German, "1536,5" in English). Mixed-up text ("1,234.5"
 * in German, "1,2,3") and anything that is no number read NaN; JavaScript's own forms ("1e-7") read
 * as they are. Written here: Intl formats numbers but does not read them back.
 */
export function parseDecimal(text: string, locale = LOCALE): number {
  const s = text.trim();
  if (s === "") return Number.NaN;
  const dec = locale === "de-DE" ? "," : ".";
  const grp = dec === "," ? "." : ",";
  const g = grp === "." ? "\\." : ",";
  const grouped = new RegExp(`^[+-]?[1-9]\\d{0,2}(${g}\\d{3})+$`);
  const plain = (x: string) => (/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(x) ? Number(x) : Number.NaN);
  const asDecimal = (x: string, mark: string) => {
    const parts = x.split(mark);
    return parts.length === 2 ? plain(`${parts[0]}.${parts[1]}`) : Number.NaN;
  };
  if (s.includes(grp)) {
    if (s.includes(dec)) {
      const parts = s.split(dec);
      return parts.length === 2 && grouped.test(parts[0]!) && !parts[1]!.includes(grp) ? plain(`${parts[0]!.split(grp).join("")}.${parts[1]}`) : Number.NaN;
    }
    return grouped.test(s) ? plain(s.split(grp).join("")) : asDecimal(s, grp);
  }
  return s.includes(dec) ? asDecimal(s, dec) : plain(s);
}

/**
 * A stored number as it stands in an input for the person to change: every digit the number has
 * (1e-7 → "0.0000001", never rounded), no thousands grouping, and the decimal mark of the language
 * ("0,75" in German) — what `parseDecimal` reads back as the same number. "" for none.
 */
export function inputNumber(value: number | null | undefined, locale = LOCALE): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "";
  const plain = plainDigits(value);
  return locale === "de-DE" ? plain.replace(".", ",") : plain;
}

/**
 * The locale of a language as setFormatLocale takes it ("de" → "de-DE", else "en-GB"), for a field
 * drawn while the language is changing: it is drawn again before setFormatLocale has been called.
 */
export { localeOf };

/** The shortest text that reads back as the number (JavaScript's own), without an exponent. */
function plainDigits(value: number): string {
  const s = String(value);
  const m = /^(-?)(\d)(?:\.(\d+))?e([+-]\d+)$/.exec(s);
  if (!m) return s;
  const [, sign, lead, rest = "", exp] = m;
  const digits = lead! + rest;
  const point = 1 + Number(exp);
  if (point <= 0) return `${sign}0.${"0".repeat(-point)}${digits}`;
  if (point >= digits.length) return `${sign}${digits}${"0".repeat(point - digits.length)}`;
  return `${sign}${digits.slice(0, point)}.${digits.slice(point)}`;
}

/**
 * A number's text as a program wrote it ("0.75", "1e-7": what `String(x)` gives) in the language's
 * style for an input (`inputNumber`); any other text — what a person typed — is left as it is.
 */
export function inputNumberText(text: string, locale = LOCALE): string {
  const n = Number(text);
  return text !== "" && Number.isFinite(n) && String(n) === text ? inputNumber(n, locale) : text;
}

/** The order and separator of a numeric date in the language: German "04.05.2026", British "04/05/2026". */
function datePattern(locale: string): { order: ("day" | "month" | "year")[]; separator: string } {
  const parts = new Intl.DateTimeFormat(locale, { day: "2-digit", month: "2-digit", year: "numeric" }).formatToParts(new Date(2026, 4, 4));
  const order = parts.filter((p) => p.type === "day" || p.type === "month" || p.type === "year").map((p) => p.type as "day" | "month" | "year");
  return { order, separator: parts.find((p) => p.type === "literal")?.value ?? "/" };
}

/** A calendar day YYYY-MM-DD as a person types it in the language: "04.05.2026", "04/05/2026"; "" for none. */
export function inputDate(ymd: string | null | undefined, locale = LOCALE): string {
  const m = ymd ? /^(\d{4})-(\d{2})-(\d{2})$/.exec(ymd) : null;
  if (!m) return "";
  const { order, separator } = datePattern(locale);
  const part = { year: m[1]!, month: m[2]!, day: m[3]! };
  return order.map((p) => part[p]).join(separator);
}

/**
 * A typed date → YYYY-MM-DD, or null when it is no complete, real calendar day. Reads the language's
 * order ("4.5.2026", "04/05/2026") and ISO ("2026-05-04"); a two-digit year ("4.5.26", the 2000s)
 * only when `shortYear` (a field being left: while typing, "20" may be the start of "2026").
 * Written here rather than taken from a date library: the order comes from Intl's own parts for the
 * locale, and the rest is a calendar check of a few lines (no date package is among our dependencies).
 */
export function parseInputDate(text: string, shortYear = false, locale = LOCALE): string | null {
  const s = text.trim();
  let y: number, mo: number, d: number;
  const iso = /^(\d{4})-(\d{1,2})-(\d{1,2})$/.exec(s);
  if (iso) {
    [y, mo, d] = [Number(iso[1]), Number(iso[2]), Number(iso[3])];
  } else {
    const m = /^(\d{1,2})[./-](\d{1,2})[./-](\d{4}|\d{2})$/.exec(s);
    if (!m || (m[3]!.length === 2 && !shortYear)) return null;
    const { order } = datePattern(locale);
    const read = { day: 0, month: 0, year: 0 };
    const numbers = [Number(m[1]), Number(m[2]), Number(m[3])];
    const withoutYear = order.filter((p) => p !== "year");
    read[withoutYear[0]!] = numbers[0]!;
    read[withoutYear[1]!] = numbers[1]!;
    read.year = m[3]!.length === 2 ? 2000 + numbers[2]! : numbers[2]!;
    [y, mo, d] = [read.year, read.month, read.day];
  }
  if (y < 1000 || mo < 1 || mo > 12 || d < 1) return null;
  const check = new Date(Date.UTC(y, mo - 1, d));
  if (check.getUTCMonth() !== mo - 1 || check.getUTCDate() !== d) return null;
  return `${String(y).padStart(4, "0")}-${String(mo).padStart(2, "0")}-${String(d).padStart(2, "0")}`;
}
