import { z } from "zod";

/**
 * The languages of the screens, e-mails and workbooks: English (the source), German, and a
 * pseudo-locale for testing (every English text with accented letters, lengthened and bracketed, so a
 * text left untranslated — still plain English — stands out on a screen or in a test). en-XA is the
 * BCP 47 private-use region commonly taken for pseudo-accents.
 */
export const LANGUAGES = ["en", "de", "en-XA"] as const;
export const languageSchema = z.enum(LANGUAGES);
export type Language = z.infer<typeof languageSchema>;

/** Each language by its own name (as a language picker shows them). */
export const LANGUAGE_NAMES: Record<Language, string> = { en: "English", de: "Deutsch", "en-XA": "Ƥşḗḗŭŭḓǿǿ (test)" };

/** A stored language, or null where none (or one no longer offered) is stored. */
export const languageOf = (stored: string | null | undefined): Language | null =>
  stored && (LANGUAGES as readonly string[]).includes(stored) ? (stored as Language) : null;

/** The locale a language writes numbers and dates in: German as Germany writes them, every other as British English. */
export const localeOf = (language: string | null | undefined): "de-DE" | "en-GB" => (language === "de" ? "de-DE" : "en-GB");

/** The languages people choose from; the pseudo-locale only where testing is switched on. */
export const PICKABLE_LANGUAGES: readonly Language[] = ["en", "de"];

/** The first of the browser's languages we have (de-AT → de), else English. */
export function languageFromBrowser(preferred: readonly string[]): Language {
  for (const tag of preferred) {
    const exact = LANGUAGES.find((l) => l.toLowerCase() === tag.toLowerCase());
    if (exact) return exact;
    const base = tag.split("-")[0]!.toLowerCase();
    if (base === "de") return "de";
    if (base === "en") return "en";
  }
  return "en";
}
