import i18next from "i18next";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import deMethods from "../../shared/i18n/locales/de/methods.json";
import enMethods from "../../shared/i18n/locales/en/methods.json";
import { isPseudo } from "../../shared/i18n/pseudo";
import { textIn } from "../../server/lib/words";
import { createTestApp, type TestApp } from "../helpers/test-app";

/**
 * What the reports, models and the outbox say in words (server/lib/words.ts, the `methods`
 * catalogue) comes in the asker's language — through the report thread too — while English stays as
 * it was (the report tests compare it word for word).
 */
let t: TestApp;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.05 });
});
afterAll(() => t?.close());

type Tree = { [k: string]: string | Tree };
const leaves = (tree: Tree, prefix = ""): [string, string][] =>
  Object.entries(tree).flatMap(([k, v]) => (typeof v === "string" ? [[`${prefix}${k}`, v] as [string, string]] : leaves(v, `${prefix}${k}.`)));

/** Values of a schema's enum (codes the screens translate themselves), not words. */
const CODES = new Set(["likelihood ratio", "Wald, heat-clustered"]);

/** Every text a report answer says in words: methods, notes, reasons, sentences (at any depth). */
function wordsIn(value: unknown, key = ""): [string, string][] {
  // (A level's name — a grade family, "PER" — is plant data: only texts with words between spaces count.)
  if (typeof value === "string")
    return /^(method|methods|notes|reason|sentence|note|reference|reading|verdictText|test)$/.test(key) && value.includes(" ") && !CODES.has(value)
      ? [[key, value]]
      : [];
  if (Array.isArray(value)) return value.flatMap((v) => wordsIn(v, key === "notes" ? "notes" : ""));
  if (value && typeof value === "object")
    return Object.entries(value).flatMap(([k, v]) => wordsIn(v, key === "methods" && typeof v === "string" ? "methods" : k));
  return [];
}

const REPORTS = [
  "/api/reports/rate-by-variable?defectType=SLG&variable=casting_speed_m_min&adjustFor=grade_family&stratifyBy=grade_family",
  "/api/reports/screening?defectType=SLG&adjustFor=grade_family",
  "/api/reports/adjusted?defectType=SLG&variables=casting_speed_m_min,mold_level_sd_mm&adjustFor=grade_family",
  "/api/reports/control-chart?defectType=SLG&period=week&standardise=grade_family&chart=laney",
  "/api/reports/before-after?mode=variable&variable=casting_speed_m_min&aMin=1&aMax=1.5&bMin=1.51&bMax=2&defectType=SLG&stratifyBy=grade_family",
  "/api/reports/process-window?defectType=SLG&x=casting_speed_m_min&y=embr_current_a&xBins=2&yBins=2&binning=equal&minN=5",
];

describe("a report's words in the reader's language", () => {
  it("when the thread-free translator says a methods text, then it equals i18next's in English and German, plurals and values included", async () => {
    const i18n = i18next.createInstance();
    await i18n.init({
      resources: { en: { methods: enMethods }, de: { methods: deMethods } },
      lng: "en",
      ns: ["methods"],
      interpolation: { escapeValue: false },
    });
    const keys = [...new Set(leaves(enMethods as Tree).map(([k]) => k.replace(/_(one|other)$/, "")))];
    expect(keys.length).toBeGreaterThan(250);
    for (const language of ["en", "de"] as const) {
      const tr = i18n.getFixedT(language, "methods");
      for (const key of keys) {
        for (const count of [1, 7]) {
          const values = { count, why: "W", name: "N", terms: "T", se: "S", fit: "F", list: "L", level: "95", x: "X", y: "Y" };
          expect(textIn(language, key, values), `${language} ${key} ${count}`).toBe(tr(key, values));
        }
      }
    }
  });

  it("when a German engineer asks each report, then its methods and notes are German, and the same report in English is word for word the English catalogue's", async () => {
    const quality = await t.agentFor("quality");
    const screening = await quality.get(REPORTS[1]!).set("Accept-Language", "de");
    expect(screening.status).toBe(200);
    expect(screening.body.notes).toContain(deMethods.screening.notCause);
    expect(screening.body.methods.multiplicity).toBe(deMethods.screening.method.multiplicity);
    const english = await quality.get(REPORTS[1]!).set("Accept-Language", "en");
    expect(english.body.notes).toContain(enMethods.screening.notCause);
    // The numbers do not depend on the language.
    expect(english.body.variables.map((v: { p: number | null }) => v.p)).toEqual(screening.body.variables.map((v: { p: number | null }) => v.p));

    const adjusted = await quality.get(REPORTS[2]!).set("Accept-Language", "de");
    expect(adjusted.status).toBe(200);
    expect(adjusted.body.notes.at(-1)).toBe(deMethods.adjusted.notCause);
    expect(adjusted.body.methods.grouping).toBe(deMethods.grouping);
    // A variable's name inside a German sentence is the screens' German word for it.
    const sentence = adjusted.body.terms.find((x: { changeInEstimate: { sentence: string | null } }) => x.changeInEstimate.sentence)?.changeInEstimate.sentence;
    if (sentence) expect(sentence).toMatch(/Gießgeschwindigkeit|Gießspiegelschwankung/);

    const chart = await quality.get(REPORTS[3]!).set("Accept-Language", "de");
    expect(chart.status).toBe(200);
    expect(chart.body.rules.legend["1"]).toBe(deMethods.stats.control.rule1);
    expect(chart.body.notes.at(-1)).toBe(deMethods.chart.crudeLimits);
    expect(chart.body.overdispersion.note).toMatch(/^σ_z = \d+,\d\d /);
  });

  it("when someone reads every report in the pseudo-locale, then no method, note, reason or sentence is left in plain English", async () => {
    const quality = await t.agentFor("quality");
    let seen = 0;
    for (const url of REPORTS) {
      const res = await quality.get(url).set("Accept-Language", "en-XA");
      expect(res.status, url).toBe(200);
      for (const [key, text] of wordsIn(res.body)) {
        seen++;
        expect(isPseudo(text), `${url} ${key}: ${text}`).toBe(true);
      }
    }
    expect(seen).toBeGreaterThan(40);
  });

  it("when a German process engineer reads the operating windows and an administrator the outbox, then the verdicts, the method and the mail server's description are German", async () => {
    const process = await t.agentFor("process");
    const windows = await process.get("/api/operating-windows").set("Accept-Language", "de");
    expect(windows.status).toBe(200);
    const records = windows.body.items.map((w: { record: { method: string; verdictText: string } | null }) => w.record).filter(Boolean);
    expect(records.length).toBeGreaterThan(0);
    const germanVerdicts = Object.entries(deMethods.windows)
      .filter(([k]) => k !== "method")
      .map(([, v]) => v);
    for (const r of records) {
      expect(r.method).toBe(deMethods.windows.method);
      expect(germanVerdicts).toContain(r.verdictText);
    }
    const admin = await t.agentFor("admin");
    const outbox = await admin.get("/api/admin/outbox").set("Accept-Language", "de");
    expect(outbox.status).toBe(200);
    expect(outbox.body.transport).toMatch(/^(der SMTP-Server unter|kein Mailserver|der lokale Test-SMTP-Server)/);
    const outboxEn = await admin.get("/api/admin/outbox").set("Accept-Language", "en");
    expect(outboxEn.body.transport).toMatch(/^(the SMTP server at|no mail server|the local fake SMTP server)/);
  });
});
