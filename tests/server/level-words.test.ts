import type ExcelJS from "exceljs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import deCommon from "../../shared/i18n/locales/de/common.json";
import enCommon from "../../shared/i18n/locales/en/common.json";
import deServer from "../../shared/i18n/locales/de/server.json";
import enServer from "../../shared/i18n/locales/en/server.json";
import { levelWord } from "../../shared/i18n/levels";
import { isPseudo } from "../../shared/i18n/pseudo";
import { SEQUENCE_LEVELS } from "../../server/services/reports/adjusted";
import { named, speakingIn } from "../../server/lib/words";
import { scoreUnscoredSlabs } from "../../server/services/risk/risk.service";
import { createTestApp, type TestApp } from "../helpers/test-app";
import { downloadWorkbook } from "../helpers/workbooks";

/**
 * The level names the product makes itself (the buckets of the position in the sequence, the two
 * transition levels, "<caster> strand <n>") are said in the reader's language wherever they are shown
 * — a fit's words, a workbook's cells — while the answers keep the English level as their key and every
 * number stays the same; English is word for word what it was. Grades and grade families are plant
 * data: shown as they are.
 */
let t: TestApp;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.05 });
});
afterAll(() => t?.close());

const FIXED: [string, keyof typeof enCommon.terms.levels][] = [
  ["1st heat", "firstHeat"],
  ["2nd–3rd heat", "secondThirdHeat"],
  ["4th heat on", "fourthHeatOn"],
  ["unknown", "unknown"],
  ["transition", "transition"],
  ["not transition", "notTransition"],
];

/** A workbook asked for in a language. */
const workbookIn = async (language: "en" | "de", path: string) => {
  const quality = await t.agentFor("quality");
  return downloadWorkbook({ get: (p: string) => quality.get(p).set("Accept-Language", language) }, path);
};
const rowsOf = (ws: ExcelJS.Worksheet) => ws.getRows(2, ws.rowCount - 1)!.map((r) => (r.values as unknown[]).slice(1));
const numbersOf = (ws: ExcelJS.Worksheet) => rowsOf(ws).map((r) => r.filter((v) => typeof v === "number"));
const column = (ws: ExcelJS.Worksheet, header: string) => {
  const j = (ws.getRow(1).values as unknown[]).slice(1).map(String).indexOf(header);
  expect(j, header).toBeGreaterThanOrEqual(0);
  return rowsOf(ws).map((r) => r[j]);
};

describe("the level names of categorical terms in the reader's language", () => {
  it("when a level is one of ours, then the catalogue names it (English exactly the server's level), and plant data is left alone", () => {
    // Every bucket the server makes has its words.
    expect([...SEQUENCE_LEVELS].map((l) => levelWord(l)?.key)).toEqual(["levels.firstHeat", "levels.secondThirdHeat", "levels.fourthHeatOn", "levels.unknown"]);
    for (const [level, key] of FIXED) {
      expect(levelWord(level)).toEqual({ key: `levels.${key}`, values: {} });
      expect(enCommon.terms.levels[key]).toBe(level);
      expect(deCommon.terms.levels[key]).not.toBe(level);
    }
    expect(levelWord("CC1 strand 2")).toEqual({ key: "levels.strand", values: { caster: "CC1", strand: "2" } });
    for (const plant of ["HSLA", "S355J2", "CC1", "PER", "strand 2", "CC1 strand", "Unknown"]) expect(levelWord(plant), plant).toBeNull();
  });

  it("when a fit names a level's column, then German and the pseudo-locale say the label and the level in their words, and English is unchanged", () => {
    const cases = [
      "Position in sequence = 1st heat",
      "Strand = CC2 strand 1",
      "Transition slab = not transition",
      "Grade family = HSLA",
      "Casting speed",
      "4th heat on",
    ];
    expect(speakingIn("en", () => cases.map(named))).toEqual(cases);
    expect(speakingIn("de", () => cases.map(named))).toEqual([
      `Position in der Sequenz = ${deCommon.terms.levels.firstHeat}`,
      `Strang = ${deCommon.terms.levels.strand.replace("{{caster}}", "CC2").replace("{{strand}}", "1")}`,
      `Übergangsbramme = ${deCommon.terms.levels.notTransition}`,
      "Güteklasse = HSLA",
      "Gießgeschwindigkeit",
      deCommon.terms.levels.fourthHeatOn,
    ]);
    const pseudo = speakingIn("en-XA", () => named("Strand = CC2 strand 1"));
    const [label, level] = pseudo.split(" = ");
    expect(isPseudo(label!)).toBe(true);
    expect(isPseudo(level!)).toBe(true);
    expect(level).toContain("CC2");
  });

  it("when a German engineer asks the adjusted model over the position in the sequence and the strand, then the answer keeps its English levels and numbers, and the workbook names the levels in German", async () => {
    const quality = await t.agentFor("quality");
    const qs = "defectType=SLG&variables=sequence_position,casting_speed_m_min&adjustFor=strand";
    const en = await quality.get(`/api/reports/adjusted?${qs}`).set("Accept-Language", "en");
    const de = await quality.get(`/api/reports/adjusted?${qs}`).set("Accept-Language", "de");
    expect(en.status).toBe(200);
    expect(de.status).toBe(200);
    type Term = { level: string | null; reference: string | null; adjusted: { oddsRatio: number | null } };
    const levelsOf = (b: { terms: Term[] }) => b.terms.map((x) => [x.level, x.reference]);
    // The levels are keys: the same English in both answers; so are the numbers.
    expect(levelsOf(de.body)).toEqual(levelsOf(en.body));
    expect(de.body.terms.map((x: Term) => x.adjusted.oddsRatio)).toEqual(en.body.terms.map((x: Term) => x.adjusted.oddsRatio));
    const sequenceLevels = en.body.terms.filter((x: Term & { variable: string }) => x.variable === "sequence_position").map((x: Term) => x.level);
    expect(sequenceLevels.length).toBeGreaterThan(0);

    const wbEn = await workbookIn("en", `/api/reports/adjusted.xlsx?${qs}`);
    const wbDe = await workbookIn("de", `/api/reports/adjusted.xlsx?${qs}`);
    const orsEn = wbEn.getWorksheet(enServer.report.sheets.oddsRatios)!;
    const orsDe = wbDe.getWorksheet(deServer.report.sheets.oddsRatios)!;
    // English cells: the server's levels as they are.
    expect(column(orsEn, enServer.report.headers.level)).toEqual(en.body.terms.map((x: Term) => x.level ?? ""));
    expect(column(orsEn, enServer.report.headers.againstReference)).toEqual(en.body.terms.map((x: Term) => x.reference ?? ""));
    // German cells: the same levels in German words.
    const german = (level: string | null) => {
      if (level === null) return "";
      const word = levelWord(level);
      if (!word) return level;
      const text = (deCommon.terms as unknown as Record<string, Record<string, string>>).levels![word.key.slice("levels.".length)]!;
      return text.replace("{{caster}}", word.values.caster ?? "").replace("{{strand}}", word.values.strand ?? "");
    };
    const deLevels = column(orsDe, deServer.report.headers.level);
    expect(deLevels).toEqual(en.body.terms.map((x: Term) => german(x.level)));
    expect(column(orsDe, deServer.report.headers.againstReference)).toEqual(en.body.terms.map((x: Term) => german(x.reference)));
    expect(deLevels.some((l) => typeof l === "string" && / Strang \d+$/.test(l))).toBe(true);
    expect(deLevels.some((l) => typeof l === "string" && /Schmelze$/.test(l))).toBe(true);
    expect(deLevels.join("|")).not.toMatch(/heat|strand/);
    // The same numbers in both workbooks.
    expect(numbersOf(orsDe)).toEqual(numbersOf(orsEn));

    const levelsEn = wbEn.getWorksheet(enServer.report.sheets.levels)!;
    const levelsDe = wbDe.getWorksheet(deServer.report.sheets.levels)!;
    expect(column(levelsDe, deServer.report.headers.level)).toEqual(column(levelsEn, enServer.report.headers.level).map((l) => german(String(l))));
    expect(column(levelsDe, deServer.report.headers.level)).toContain(deCommon.terms.levels.firstHeat);
    expect(numbersOf(levelsDe)).toEqual(numbersOf(levelsEn));
  });

  it("when a German engineer splits a rate by transition slabs, then the per-level sheet says the transition levels in German with the English numbers", async () => {
    const qs = "defectType=SLG&variable=casting_speed_m_min&stratifyBy=transition";
    const wbEn = await workbookIn("en", `/api/reports/rate-by-variable.xlsx?${qs}`);
    const wbDe = await workbookIn("de", `/api/reports/rate-by-variable.xlsx?${qs}`);
    const en = wbEn.getWorksheet(enServer.report.sheets.oddsRatiosWithinLevels)!;
    const de = wbDe.getWorksheet(deServer.report.sheets.oddsRatiosWithinLevels)!;
    // The first column, headed by the split's name, holds the levels.
    const levelsEn = column(en, enCommon.terms.categorical.transition);
    expect(levelsEn.length).toBeGreaterThan(0);
    for (const l of levelsEn) expect(["transition", "not transition"]).toContain(l);
    const byEnglish: Record<string, string> = { transition: deCommon.terms.levels.transition, "not transition": deCommon.terms.levels.notTransition };
    expect(column(de, deCommon.terms.categorical.transition)).toEqual(levelsEn.map((l) => byEnglish[String(l)]));
    expect(numbersOf(de)).toEqual(numbersOf(en));
  });

  it("when a German inspector reads the slabs to check first, then a reason naming a strand or a bucket of the sequence says it in German, and English is as it was", async () => {
    const quality = await t.agentFor("quality");
    const trained = await quality
      .post("/api/risk-models")
      .set("Origin", t.env.BETTER_AUTH_URL)
      .send({
        targetKind: "type",
        targetCode: "SLG",
        conditions: ["casting_speed_m_min"],
        categories: ["strand", "sequence_position", "transition"],
        knots: 3,
      });
    expect(trained.status, JSON.stringify(trained.body)).toBe(201);
    // Switched on behind the app's back (whether it beats the baseline does not matter to its words), then every recent slab scored.
    const c = t.db.$client;
    c.prepare("update risk_models set active = 0").run();
    c.prepare("update risk_models set active = 1 where id = ?").run(trained.body.id);
    scoreUnscoredSlabs(t.db);
    const inspector = await t.agentFor("inspector");
    const listIn = async (language: string) => {
      const res = await inspector.get("/api/risk/slabs?defectType=SLG&limit=1000").set("Accept-Language", language);
      expect(res.status).toBe(200);
      return res.body.items as { slabId: string; risk: number; reasons: { variable: string; text: string }[] }[];
    };
    const en = await listIn("en");
    const de = await listIn("de");
    expect(de.map((i) => [i.slabId, i.risk])).toEqual(en.map((i) => [i.slabId, i.risk]));
    const categorical = (items: typeof en) =>
      items.flatMap((i) => i.reasons.filter((r) => ["strand", "sequence_position", "transition"].includes(r.variable)).map((r) => r.text));
    const enWords = categorical(en);
    const deWords = categorical(de);
    expect(enWords.length).toBeGreaterThan(0);
    expect(deWords).toHaveLength(enWords.length);
    // English: the server's levels as they always were ("Strand: CC1 strand 2 (most common: CC2 strand 1)").
    for (const text of enWords)
      expect(text).toMatch(
        /^(Strand: \S+ strand \d+|Position in sequence: (1st heat|2nd–3rd heat|4th heat on|unknown)|Transition slab: (not )?transition)( \(most common: .+\))?$/,
      );
    // German: the same reasons in German words, no English level left.
    for (const text of deWords) {
      expect(text).toMatch(/^(Strang|Position in der Sequenz|Übergangsbramme): /);
      expect(text).not.toMatch(/ strand \d|heat|transition/);
    }
  }, 120_000);
});
