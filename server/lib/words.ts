/**
 * What a report or a model says in words — how a number was reached (its method), what it cannot say
 * (notes and reasons), a rule's verdict — in the reader's language, from the `methods` catalogue
 * (shared/i18n/locales/<lang>/methods.json).
 *
 * The language is the request's, carried through the handler's awaits by AsyncLocalStorage
 * (server/lib/route.ts starts it for every API request), and handed to the report thread with each
 * report, which says its words in it too; the training thread says a model's words in every language
 * (model.ts). Outside a request (tests calling a report function directly, the seed, scheduled
 * checks) it is English, so English stays word for word what it was.
 *
 * No i18next here: a report thread needs only this catalogue, put together the way
 * http-error.ts's `englishOf` does (`{{value}}` put in, `_one`/`_other` by `count`, as English and
 * German both count); tests/server/report-words.test.ts compares it with i18next's for every key.
 */
import { AsyncLocalStorage } from "node:async_hooks";
import type { Language } from "@shared/i18n/languages";
import { inSentence } from "@shared/api/reports";
import deCommon from "@shared/i18n/locales/de/common.json";
import deMethods from "@shared/i18n/locales/de/methods.json";
import enCommon from "@shared/i18n/locales/en/common.json";
import enMethods from "@shared/i18n/locales/en/methods.json";
import { levelSaid } from "@shared/i18n/levels";
import { pseudoCatalogue } from "@shared/i18n/pseudo";
import { fillText, findText as find, pluralText, type Tree } from "./catalogue-text";

const speaking = new AsyncLocalStorage<Language>();

/** Runs `fn` (and everything it awaits) speaking `language`. */
export const speakingIn = <T>(language: Language | null | undefined, fn: () => T): T => speaking.run(language ?? "en", fn);

/** The language words are said in here and now (English outside a request). */
export const currentLanguage = (): Language => speaking.getStore() ?? "en";

let pseudoMade: Tree | null = null;
const catalogueOf = (language: Language): Tree =>
  language === "de" ? (deMethods as Tree) : language === "en-XA" ? (pseudoMade ??= pseudoCatalogue(enMethods as Tree)) : (enMethods as Tree);
let pseudoTerms: Tree | null = null;
const termsOf = (language: Language): Tree =>
  (language === "de" ? deCommon.terms : language === "en-XA" ? (pseudoTerms ??= pseudoCatalogue(enCommon.terms as Tree)) : enCommon.terms) as Tree;

export type WordValues = Record<string, string | number>;

/** A text of the `methods` catalogue in a language (the current one unless given). */
export function textIn(language: Language, key: string, values: WordValues = {}): string {
  const text = pluralText(catalogueOf(language), key, values.count) ?? pluralText(enMethods as Tree, key, values.count) ?? key;
  return fillText(text, values);
}

/** A text of the `methods` catalogue in the current language: `say("rate.wilson", { level: 95 })`. */
export const say = (key: string, values?: WordValues): string => textIn(currentLanguage(), key, values);

/** A number with a fixed count of decimals, as the current language writes it (0.75 · 0,75). */
export const dec = (x: number, digits: number): string => {
  const s = x.toFixed(digits);
  return currentLanguage() === "de" ? s.replace(".", ",") : s;
};

/** A decimal as the current language writes it, with the digits it has (for values already rounded). */
export const num = (x: number | string): string => {
  const s = String(x);
  return currentLanguage() === "de" ? s.replace(".", ",") : s;
};

let byEnglish: Map<string, string> | null = null;
/** A level of ours ("1st heat", "transition", "CC1 strand 2") in the language's words; plant data (a grade) as it is. */
const levelIn = (language: Language, level: string): string =>
  levelSaid(level, (key, values) => {
    const text = find(termsOf(language), key);
    return text === undefined ? undefined : fillText(text, values);
  });

/**
 * A term's name as a fit writes it (its English label, or "label = level" for a level's column), in
 * the current language: the label found by its English words among the screens' terms, the level in
 * the screens' words where it is one of ours (shared/i18n/levels.ts), plant data (a grade) as it is.
 * A bare level ("1st heat") is said the same way.
 */
export function named(name: string): string {
  const language = currentLanguage();
  if (language === "en") return name;
  if (!byEnglish) {
    byEnglish = new Map();
    const terms = enCommon.terms as Tree;
    for (const [key, v] of Object.entries(terms.variables as Tree)) byEnglish.set((v as Tree).label as string, `variables.${key}.label`);
    for (const [key, v] of Object.entries(terms.categorical as Tree)) byEnglish.set(v as string, `categorical.${key}`);
  }
  const eq = name.indexOf(" = ");
  const label = eq >= 0 ? name.slice(0, eq) : name;
  const path = byEnglish.get(label);
  if (!path && eq < 0) return levelIn(language, name);
  const said = path ? (find(termsOf(language), path) ?? label) : label;
  return eq >= 0 ? `${said} = ${levelIn(language, name.slice(eq + 3))}` : said;
}

/** A term's name inside a sentence: English as the reports have always written it (`inSentence`:
 * "casting speed", "SEN depth"), another language as its screens name it (German nouns keep their capital). */
export const inWords = (label: string): string => (currentLanguage() === "en" ? inSentence(label) : named(label));
