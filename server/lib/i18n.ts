/**
 * The server's texts in the reader's language, from the same catalogues as the screens
 * (shared/i18n): one i18next instance, English at start and each other language added the first
 * time a text is asked in it (a thread that only ever writes English refusals — the import and
 * report threads — holds English alone), and a fixed `t` per language for e-mails, workbook headers
 * and messages.
 */
import i18next, { type TFunction } from "i18next";
import { LANGUAGES, languageFromBrowser, type Language } from "@shared/i18n/languages";
import { NAMESPACES, resourcesFor } from "@shared/i18n/resources";
import { installTranslator } from "./http-error";

const instance = i18next.createInstance();
void instance.init({
  resources: { en: resourcesFor("en") },
  lng: "en",
  fallbackLng: "en",
  ns: [...NAMESPACES],
  defaultNS: "common",
  // Texts go into e-mails, workbooks and JSON, never into HTML unescaped by a template of ours.
  interpolation: { escapeValue: false },
  initAsync: false,
});

const fixed = new Map<Language, TFunction>();

/** `t` for one language (English where the person chose none). */
export function translator(language: Language | null | undefined): TFunction {
  const lng = language ?? "en";
  let t = fixed.get(lng);
  if (!t) {
    if (lng !== "en" && LANGUAGES.includes(lng)) {
      const catalogue = resourcesFor(lng);
      for (const ns of NAMESPACES) instance.addResourceBundle(lng, ns, catalogue[ns], true, true);
    }
    fixed.set(lng, (t = instance.getFixedT(lng)));
  }
  return t;
}

/**
 * The language to answer a request in: the signed-in person's choice, else the first language of
 * the browser's Accept-Language we have, else English.
 */
export function requestLanguage(req: { user?: { language?: Language | null } | null; acceptsLanguages(): string[] }): Language {
  return req.user?.language ?? languageFromBrowser(req.acceptsLanguages().filter((l) => l !== "*"));
}

// Refusals made from here on are said through the catalogues (server/lib/http-error.ts).
installTranslator((language) => translator(language) as unknown as (key: string, values?: Record<string, unknown>) => string);
