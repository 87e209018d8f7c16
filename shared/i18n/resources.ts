/**
 * The catalogues every part reads: the client through react-i18next, the server (e-mails, workbook
 * headers, messages) through its own i18next instance (server/lib/i18n.ts). English is the source;
 * German is ours (shared/i18n/REVIEW.md lists what a native reviewer should check); the pseudo-locale
 * is made from English (pseudo.ts).
 */
import deCommon from "./locales/de/common.json";
import enCommon from "./locales/en/common.json";
import type { Language } from "./languages";
import { pseudoCatalogue } from "./pseudo";

export const NAMESPACES = ["common"] as const;
export type Namespace = (typeof NAMESPACES)[number];

export const en = { common: enCommon };
export type Catalogue = typeof en;

/** German: every key of the English catalogue (checked by tests/shared/i18n.test.ts). */
export const de: Catalogue = { common: deCommon };

export const resourcesFor = (language: Language): Catalogue => (language === "de" ? de : language === "en-XA" ? pseudo() : en);

let pseudoMade: Catalogue | null = null;
function pseudo(): Catalogue {
  pseudoMade ??= { common: pseudoCatalogue(enCommon) };
  return pseudoMade;
}
