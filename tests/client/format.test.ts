import { describe, expect, it } from "vitest";
import { bytes, count, parseDecimal, date, dateTime, formatLocale, num, pct, pctRange, plural, pValue, setFormatLocale, sig, time } from "../../src/lib/format";

/**
 * The screens' number and date texts come from formatters made once (src/lib/format.ts); they must
 * read exactly as `toLocaleString("en-GB", options)` does, which the language defines as a new
 * formatter with the same options.
 */
const en = (v: number, min?: number, max?: number) => v.toLocaleString("en-GB", { minimumFractionDigits: min, maximumFractionDigits: max });

describe("formatting", () => {
  it("when numbers of every size and sign are shown with 0–4 decimals, then the text is the one toLocaleString gives, dash for a gap", () => {
    const values = [0, -0, 1, -1, 0.5, 0.005, 2.675, -0.0049, 1e-7, 1234.5, 123456789.123, 15852, 0.12468];
    for (let i = 0; i < 500; i++) values.push(Math.sin(i) * 10 ** ((i % 13) - 5));
    for (const v of values)
      for (const d of [0, 1, 2, 3, 4]) {
        expect(num(v, d)).toBe(en(v, d, d));
        expect(pct(v, d)).toBe(`${en(v * 100, d, d)} %`);
        expect(pctRange(v, v / 2, d)).toBe(`${en(v * 100, d, d)}–${en((v / 2) * 100, d, d)} %`);
      }
    expect(num(15852)).toBe("15,852");
    expect(pct(0.1247, 2)).toBe("12.47 %");
    expect(num(null)).toBe("—");
    expect(pct(Number.NaN)).toBe("—");
    expect(plural(15852, "slab")).toBe("15,852 slabs");
    expect(plural(1, "slab")).toBe("1 slab");
    expect(pValue(0.04321)).toBe("0.0432");
    expect(pValue(0.00036)).toBe("3.6 × 10⁻⁴");
    expect(sig(1.23456)).toBe("1.23");
    expect(sig(12345.6, 3)).toBe(en(12300, undefined, 10));
  });

  it('when counts of every size and sign are shown, then the text is the one toLocaleString("en-GB") gives', () => {
    const values = [0, -0, 1, -1, 7, 999, 1000, 15852, 123456789, -40312, 0.5, 1234.5678, 2.0004];
    for (let i = 0; i < 500; i++) values.push(Math.round(Math.exp(i / 20)) * (i % 3 === 0 ? -1 : 1), Math.exp(i / 25) - 1);
    for (const v of values) expect(count(v)).toBe(v.toLocaleString("en-GB"));
    expect(count(15852)).toBe("15,852");
    expect(count(1234567)).toBe("1,234,567");
    expect(count(1234.5678)).toBe("1,234.568");
  });

  it("when dates and times are shown, then they read as toLocaleString gives them", () => {
    for (let i = 0; i < 200; i++) {
      const d = new Date(Date.UTC(2024, 0, 1) + i * 7_654_321_987);
      const iso = d.toISOString();
      expect(dateTime(iso)).toBe(d.toLocaleString("en-GB", { day: "numeric", month: "short", year: "numeric", hour: "2-digit", minute: "2-digit" }));
      expect(date(iso)).toBe(d.toLocaleDateString("en-GB", { day: "numeric", month: "short", year: "numeric" }));
      expect(time(iso)).toBe(d.toLocaleTimeString("en-GB", { hour: "2-digit", minute: "2-digit" }));
    }
    expect(date("not a date")).toBe("—");
  });

  it("when the person reads German, then numbers take the decimal comma and the point between thousands, dates German month names; back in English, as before", () => {
    try {
      setFormatLocale("de");
      expect(formatLocale()).toBe("de-DE");
      expect(pValue(0.00036)).toBe("3,6 × 10⁻⁴");
      expect(num(1234.5, 1)).toBe("1.234,5");
      expect(count(15852)).toBe("15.852");
      expect(pct(0.1247, 2)).toBe("12,47 %");
      expect(pctRange(0.0499, 0.0571)).toBe("4,99–5,71 %");
      expect(sig(1.23456)).toBe("1,23");
      expect(pValue(0.04321)).toBe("0,0432");
      expect(bytes(1536)).toBe("2 kB");
      expect(bytes(5 * 1024 * 1024 + 100_000)).toBe("5,1 MB");
      // Intl's German: "3. Dez. 2026" (the month abbreviated with a point), 24-hour clock.
      expect(date("2026-12-03T10:00:00Z")).toBe(
        new Date("2026-12-03T10:00:00Z").toLocaleDateString("de-DE", { day: "numeric", month: "short", year: "numeric" }),
      );
      expect(date("2026-12-03T10:00:00Z")).toMatch(/^3\. Dez\.? 2026$/);
      for (const v of [0.5, -1234.5678, 123456789.123])
        expect(num(v, 2)).toBe(v.toLocaleString("de-DE", { minimumFractionDigits: 2, maximumFractionDigits: 2 }));
    } finally {
      setFormatLocale("en");
    }
    expect(formatLocale()).toBe("en-GB");
    expect(num(1234.5, 1)).toBe("1,234.5");
  });

  it("when a person types a number, then it is read in the language's style, the other style's decimal mark is understood, and mixed-up text is no number", () => {
    // Both languages: either decimal mark alone, signs, JavaScript's own forms; nothing typed is no number.
    for (const locale of ["en-GB", "de-DE"]) {
      expect(parseDecimal("0,75", locale)).toBe(0.75);
      expect(parseDecimal("0.75", locale)).toBe(0.75);
      expect(parseDecimal(" 1536,5 ", locale)).toBe(1536.5);
      expect(parseDecimal("7", locale)).toBe(7);
      expect(parseDecimal("-0,003", locale)).toBe(-0.003);
      expect(parseDecimal("1e-7", locale)).toBe(1e-7);
      expect(parseDecimal("1,2,3", locale)).toBeNaN();
      expect(parseDecimal("", locale)).toBeNaN();
      expect(parseDecimal("   ", locale)).toBeNaN();
      expect(parseDecimal("abc", locale)).toBeNaN();
      expect(parseDecimal("12 mm", locale)).toBeNaN();
    }
    // English: a comma between whole groups of three is a thousands mark.
    expect(parseDecimal("1,200", "en-GB")).toBe(1200);
    expect(parseDecimal("1,234.5", "en-GB")).toBe(1234.5);
    expect(parseDecimal("12,345,678", "en-GB")).toBe(12345678);
    expect(parseDecimal("1.234", "en-GB")).toBe(1.234);
    expect(parseDecimal("1.234,5", "en-GB")).toBeNaN();
    // German: the point is the thousands mark, the comma the decimal one.
    expect(parseDecimal("1.234", "de-DE")).toBe(1234);
    expect(parseDecimal("1.234,5", "de-DE")).toBe(1234.5);
    expect(parseDecimal("1,234", "de-DE")).toBe(1.234);
    expect(parseDecimal("1,234.5", "de-DE")).toBeNaN();
    expect(parseDecimal("1.5", "de-DE")).toBe(1.5);
    // The language set for the screens is the default.
    setFormatLocale("de");
    try {
      expect(parseDecimal("1.500")).toBe(1500);
    } finally {
      setFormatLocale("en");
    }
    expect(parseDecimal("1.500")).toBe(1.5);
  });
});
