/**
 * The screens' texts through react-i18next, from the shared catalogues (shared/i18n). English is in
 * the first script (the source and the fallback); German and the pseudo-locale load when chosen.
 * The language: the person's own choice (me.language) once signed in, else the browser's.
 */
import i18n from "i18next";
import { initReactI18next } from "react-i18next";
import enCommon from "@shared/i18n/locales/en/common.json";
import { languageFromBrowser, type Language } from "@shared/i18n/languages";

void i18n.use(initReactI18next).init({
  resources: { en: { common: enCommon } },
  lng: "en",
  fallbackLng: "en",
  ns: ["common"],
  defaultNS: "common",
  // React escapes what it renders.
  interpolation: { escapeValue: false },
  initAsync: false,
  react: { useSuspense: false },
});

async function catalogueFor(language: Language) {
  if (language === "de") return (await import("@shared/i18n/locales/de/common.json")).default;
  const { pseudoCatalogue } = await import("@shared/i18n/pseudo");
  return pseudoCatalogue(enCommon);
}

/** Switches every screen to `language` (its catalogue fetched first when not yet here). */
export async function applyLanguage(language: Language) {
  if (language !== "en" && !i18n.hasResourceBundle(language, "common")) i18n.addResourceBundle(language, "common", await catalogueFor(language));
  if (i18n.language !== language) await i18n.changeLanguage(language);
  document.documentElement.lang = language;
}

/** The language to show: the person's choice, else the browser's. */
export const languageFor = (chosen: Language | null | undefined): Language => chosen ?? languageFromBrowser(navigator.languages ?? [navigator.language]);

export { i18n };
