import { describe, expect, it } from "vitest";
import { languageFromBrowser, languageOf } from "../../shared/i18n/languages";
import { isPseudo, pseudoText } from "../../shared/i18n/pseudo";
import { de, en, resourcesFor } from "../../shared/i18n/resources";
import { translator } from "../../server/lib/i18n";
import { schemaMessage, type Translate } from "../../shared/i18n/schema-messages";

/** Texts German writes as English does (a word both use, a unit, a name). */
/**
 * Texts German writes as English does: words both use (Name, Status, Code, Import, Phase, Median,
 * Test, Screening, Coil, Offline, Aluminium…), a term kept in English by German statisticians (AUC,
 * "p (BH)"), and lines made of a value and a unit.
 */
const SAME_IN_GERMAN = [
  "common.roles.admin",
  "common.nav.items./import",
  "common.terms.variables.al_pct.label",
  "admin.imports.columns.types.boolean",
  "admin.imports.errors.problem",
  "admin.imports.title",
  "admin.outbox.status",
  "admin.outbox.table.status",
  "admin.plant.calibration.offset",
  "admin.plant.grades.code",
  "admin.plant.grades.name",
  "admin.tokens.table.name",
  "admin.tokens.table.status",
  "admin.users.form.name",
  "admin.users.table.name",
  "admin.users.table.status",
  "analysis.controlChart.cols.phase",
  "claims.claimsTable.status",
  "claims.history.chemistry.element",
  "claims.history.elements.al_pct",
  "claims.history.elements.ni_pct",
  "claims.history.elements.v_pct",
  "claims.home.status",
  "claims.summary.status",
  "claims.traceChain.coil",
  "common.band.offline",
  "heats.chemistry.element",
  // "Status → {{status}}": the same words in German, the status's name put in.
  "audit.claimHistory.status",
  // "Separation: {{why}}" — the statistical term is the same word in German.
  "methods.adjusted.separation",
  // "AUC: {{why}}." — the abbreviation is the same in German.
  "methods.riskModel.auc",
  "process.causes.editor.code",
  "process.causes.editor.name",
  "process.investigations.table.status",
  "process.risk.drift.col.auc",
  "process.risk.model.term",
  "reports.home.name",
  "reports.kinds.screening.title",
  "reports.rbv.median",
  "reports.rbv.test",
  "reports.screening.pBh",
  "reports.screening.suggestedName",
  "yard.outboxStatus.offline",
  "yard.slabPage.defectLine",
  "yard.slabPage.offline",
];

type Tree = { [k: string]: string | Tree };
const leaves = (t: Tree, prefix = ""): [string, string][] =>
  Object.entries(t).flatMap(([k, v]) => (typeof v === "string" ? [[prefix + k, v] as [string, string]] : leaves(v, `${prefix}${k}.`)));
const placeholders = (s: string) => [...s.matchAll(/\{\{[^}]*\}\}|<\/?\d+\/?>|\$t\([^)]*\)/g)].map((m) => m[0]).sort();

describe("the catalogues", () => {
  it("when German is compared with English, then it has every key and no other, each text translated, with the same placeholders and tags", () => {
    const enLeaves = new Map(leaves(en as unknown as Tree));
    const deLeaves = new Map(leaves(de as unknown as Tree));
    expect([...deLeaves.keys()].sort()).toEqual([...enLeaves.keys()].sort());
    for (const [key, text] of enLeaves) {
      const german = deLeaves.get(key)!;
      expect(german.trim().length, key).toBeGreaterThan(0);
      expect(placeholders(german), key).toEqual(placeholders(text));
    }
    // Words the trade and the product keep in both languages, and formulas (no word in them);
    // everything else reads differently.
    const same = [...enLeaves].filter(([k, v]) => deLeaves.get(k) === v && /\p{L}{2}/u.test(v.replace(/\{\{[^}]*\}\}/g, ""))).map(([k]) => k);
    expect(same.sort()).toEqual([...SAME_IN_GERMAN].sort());
  });

  it("when a text is pseudo-localised, then its letters are accented, it is a third longer and bracketed, and placeholders and tags stay as they are", () => {
    expect(pseudoText("Sign in with {{name}}")).toBe("⟦Şīɠƞ īƞ ẇīŧħ {{name}} ····⟧");
    expect(pseudoText("Password is <1>{{password}}</1>.")).toBe("⟦Ƥȧşşẇǿřḓ īş <1>{{password}}</1>. ····⟧");
    expect(isPseudo(pseudoText("Heats"))).toBe(true);
    expect(isPseudo("Heats")).toBe(false);
    const pseudo = new Map(leaves(resourcesFor("en-XA") as unknown as Tree));
    for (const [key, text] of leaves(en as unknown as Tree)) expect(placeholders(pseudo.get(key)!), key).toEqual(placeholders(text));
  });

  it("when the browser names its languages, then the first one we have is taken (a region falls back to its language), else English", () => {
    expect(languageFromBrowser(["de-AT", "en-GB"])).toBe("de");
    expect(languageFromBrowser(["fr-FR", "en-US"])).toBe("en");
    expect(languageFromBrowser(["fr-FR", "pl"])).toBe("en");
    expect(languageFromBrowser(["en-XA"])).toBe("en-XA");
    expect(languageFromBrowser([])).toBe("en");
    expect(languageOf("de")).toBe("de");
    expect(languageOf("fr")).toBeNull();
    expect(languageOf(null)).toBeNull();
  });

  it("when the server writes a text, then it reads the same catalogue in the reader's language, English where none is chosen", () => {
    expect(translator("de")("signIn.withProvider", { name: "Werkskonto" })).toBe("Anmelden mit Werkskonto");
    expect(translator(null)("roles.quality")).toBe("Quality engineer");
    expect(translator("de")("roles.quality")).toBe("Qualitätsingenieur");
    expect(translator("en-XA")("nav.items./heats")).toBe("⟦Ħḗȧŧş ··⟧");
  });

  it("when a shared schema carries a message of its own, then the schema catalogue has it (English as the key) with its German, and the translator finds it", async () => {
    const { readFileSync, readdirSync } = await import("node:fs");
    const files = readdirSync("shared", { recursive: true, encoding: "utf8" }).filter((f) => f.endsWith(".ts") && !f.startsWith("i18n"));
    const found = new Set<string>();
    for (const f of files) {
      const source = readFileSync(`shared/${f}`, "utf8");
      for (const m of source.matchAll(/(?:error|message)\s*:\s*"((?:[^"\\]|\\.)+)"/g)) found.add(m[1]!);
      for (const m of source.matchAll(/\.(?:min|max|length|regex|refine|int|positive|nonnegative|email|url|gte|lte|gt|lt)\([^()"]*?,\s*"((?:[^"\\]|\\.)+)"\)/g))
        found.add(m[1]!);
      // A message given as a call's last argument: .refine(check, "…"), .min(0, "…").
      for (const m of source.matchAll(/,\s*"([A-Za-z][^"\n]*[.?!])"\s*\)/g)) found.add(m[1]!);
    }
    expect(found.size).toBeGreaterThan(50);
    const catalogued = new Set(Object.keys(en.schema));
    expect([...found].filter((m) => !catalogued.has(m))).toEqual([]);
    const t = translator("de") as unknown as Translate;
    expect(schemaMessage(t, "Give the slab id.")).toBe("Geben Sie die Brammennummer an.");
    expect(schemaMessage(t, "Unknown condition: choose one of the casting conditions, derived values or chemistry of the list.")).toMatch(
      /^Unbekannte Größe: /,
    );
    expect(schemaMessage(translator("en") as unknown as Translate, "Give the slab id.")).toBe("Give the slab id.");
    // A message made with values is not in the catalogue: shown as written.
    expect(schemaMessage(t, "At most 7 rows.")).toBe("At most 7 rows.");
  });
});
