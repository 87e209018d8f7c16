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
import type { Namespace } from "@shared/i18n/resources";
import { setFormatLocale } from "@/lib/format";

type Tree = { [key: string]: string | Tree };

/** Every catalogue but English `common` (bundled above), each its own chunk. */
const CATALOGUES = import.meta.glob<Tree>(["/shared/i18n/locales/*/*.json", "!/shared/i18n/locales/en/common.json"], { import: "default" });

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

/**
 * The catalogues a screen's texts come from, by its route module (shared/screens.ts). Fetched by the
 * router beside the screen's code, so the screen draws in one go; a catalogue missing here still
 * loads when its first text is asked for (the component waits for it).
 */
const SCREEN_TEXTS: Record<string, Namespace[]> = {
  yard: ["yard", "slab"],
  "yard-slab": ["yard", "slab"],
  "quality-review": ["review"],
  "quality-catalogue": ["review"],
  "quality-home": ["reports", "admin"],
  reports: ["reports"],
  "process-home": ["process", "admin"],
  "report-cause-pareto": ["reports", "process"],
  "report-control-chart": ["reports", "analysis"],
  "report-adjusted": ["reports", "analysis"],
  "report-before-after": ["reports", "analysis"],
  "claims-home": ["claims"],
  "claim-new": ["claims"],
  claim: ["claims", "heats", "process"],
  trace: ["claims", "heats", "process"],
  heats: ["heats"],
  heat: ["heats", "yard", "slab", "claims", "process"],
  "heat-history": ["heats", "claims", "process"],
  slab: ["heats", "yard", "slab", "process"],
  "risk-models": ["process"],
  "operating-windows": ["process"],
  causes: ["process"],
  "causes-untagged": ["process"],
  investigations: ["process"],
  "investigation-new": ["process"],
  investigation: ["process"],
  import: ["admin"],
  setup: ["admin"],
  "admin-users": ["admin"],
  "admin-sign-in": ["admin"],
  "admin-tokens": ["admin"],
  "admin-outbox": ["admin"],
  "change-password": ["admin"],
  "forgot-password": ["admin"],
  "reset-password": ["admin"],
};

export const textsOf = (module: string): Namespace[] => SCREEN_TEXTS[module] ?? (module.startsWith("report-") ? ["reports"] : []);

/** Loads a screen's catalogues in the language shown (and English, the fallback). */
export function textsFor(module: string): Promise<unknown> {
  const ns = textsOf(module);
  return ns.length ? i18n.loadNamespaces(ns) : Promise.resolve();
}

/** Switches every screen to `language` (its catalogues fetched first when not yet here). */
export async function applyLanguage(language: Language) {
  if (i18n.language !== language) await i18n.changeLanguage(language);
  setFormatLocale(language);
  document.documentElement.lang = language;
}

/** The language to show: the person's choice, else the browser's. */
export const languageFor = (chosen: Language | null | undefined): Language => chosen ?? languageFromBrowser(navigator.languages ?? [navigator.language]);

export { i18n };
