/**
 * The screens' texts through react-i18next, from the shared catalogues (shared/i18n). One catalogue
 * (namespace) per part of the product: `common` (the frame, the sign-in pages, shared components) is
 * in the first script in English; every other one is its own small chunk, fetched beside a screen's
 * code (see textsFor, called by the router) and, for German and the pseudo-locale, when chosen.
 * A text whose catalogue is not here yet suspends its component (react-i18next's Suspense mode)
 * rather than show a key; the router's preloading makes that rare.
 * The language: the person's own choice (me.language) once signed in, else the browser's.
 */
import i18n from "i18next";
import resourcesToBackend from "i18next-resources-to-backend";
import { initReactI18next } from "react-i18next";
import enCommon from "@shared/i18n/locales/en/common.json";
import { languageFromBrowser, type Language } from "@shared/i18n/languages";
import { textsOf } from "@shared/i18n/screen-texts";
import { setFormatLocale } from "@/lib/format";

type Tree = { [key: string]: string | Tree };

/**
 * Every catalogue the screens read but English `common` (bundled above), each its own chunk. The
 * server's own (`server`, `methods`, `audit`: what it writes into refusals, answers, mails and
 * workbooks) never reach the browser.
 */
const CATALOGUES = import.meta.glob<Tree>(
  [
    "/shared/i18n/locales/*/*.json",
    "!/shared/i18n/locales/en/common.json",
    "!/shared/i18n/locales/*/server.json",
    "!/shared/i18n/locales/*/methods.json",
    "!/shared/i18n/locales/*/audit.json",
  ],
  { import: "default" },
);

async function catalogue(language: string, ns: string): Promise<Tree> {
  if (language === "en" && ns === "common") return enCommon;
  if (language === "en-XA") {
    const [{ pseudoCatalogue }, source] = await Promise.all([import("@shared/i18n/pseudo"), catalogue("en", ns)]);
    return pseudoCatalogue(source);
  }
  const load = CATALOGUES[`/shared/i18n/locales/${language}/${ns}.json`];
  if (!load) throw new Error(`No catalogue ${language}/${ns} in shared/i18n/locales.`);
  return load();
}

void i18n
  .use(resourcesToBackend(catalogue))
  .use(initReactI18next)
  .init({
    resources: { en: { common: enCommon } },
    // English `common` is given; everything else comes through the backend above.
    partialBundledLanguages: true,
    lng: "en",
    fallbackLng: "en",
    ns: ["common"],
    defaultNS: "common",
    // React escapes what it renders.
    interpolation: { escapeValue: false },
    initAsync: false,
    react: { useSuspense: true },
  });

/** Loads a screen's catalogues in the language shown (and English, the fallback). */
export function textsFor(module: string): Promise<unknown> {
  const ns = textsOf(module);
  return ns.length ? i18n.loadNamespaces(ns) : Promise.resolve();
}

/** Switches every screen to `language` (its catalogues fetched first when not yet here). */
export async function applyLanguage(language: Language) {
  // The formatters first: changeLanguage re-renders the screens, whose numbers and dates must then be in the new locale.
  setFormatLocale(language);
  if (i18n.language !== language) await i18n.changeLanguage(language);
  document.documentElement.lang = language;
}

/** The language to show: the person's choice, else the browser's. */
export const languageFor = (chosen: Language | null | undefined): Language => chosen ?? languageFromBrowser(navigator.languages ?? [navigator.language]);

export { i18n };
