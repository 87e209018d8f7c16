/**
 * The catalogues every part reads: the client through react-i18next (src/i18n, one chunk per
 * namespace), the server (e-mails, workbook headers, messages) through its own i18next instance
 * (server/lib/i18n.ts). English is the source; German is ours (shared/i18n/REVIEW.md lists what a
 * native reviewer should check); the pseudo-locale is made from English (pseudo.ts).
 *
 * Namespaces: `common` — the frame, sign-in pages and shared components (in the first script);
 * `yard` — the inspector's screens and defects; `review` — the defect review queue and the
 * catalogue editor; `reports` — the quality engineer's reports; `analysis` — control charts, the
 * adjusted model and before/after; `heats` — heats and slabs; `claims` — claims and tracing;
 * `process` — causes, investigations, operating windows and risk; `admin` — setup, users, import, tokens, mail and passwords; `server` — what the server
 * writes: error messages, e-mails, workbook headers; `schema` — the messages written into the shared
 * schemas (shared/api), keyed by their English text (schema-messages.ts), for forms and refusals alike;
 * `slab` — the slab drawing and the label scanner, on the inspector's screens and the slab and heat pages;
 * `methods` — what the server's reports and models say in words (methods, notes, reasons, verdicts),
 * written into their answers in the reader's language (server/lib/words.ts); `audit` — the audit trail
 * said in words (server/services/history-words.ts), on the trace screen and in the heat's workbook.
 */
import deAdmin from "./locales/de/admin.json";
import deClaims from "./locales/de/claims.json";
import deReview from "./locales/de/review.json";
import deAnalysis from "./locales/de/analysis.json";
import deAudit from "./locales/de/audit.json";
import deCommon from "./locales/de/common.json";
import deHeats from "./locales/de/heats.json";
import deMethods from "./locales/de/methods.json";
import deProcess from "./locales/de/process.json";
import deReports from "./locales/de/reports.json";
import deSchema from "./locales/de/schema.json";
import deSlab from "./locales/de/slab.json";
import deServer from "./locales/de/server.json";
import deYard from "./locales/de/yard.json";
import enAdmin from "./locales/en/admin.json";
import enClaims from "./locales/en/claims.json";
import enReview from "./locales/en/review.json";
import enAnalysis from "./locales/en/analysis.json";
import enAudit from "./locales/en/audit.json";
import enCommon from "./locales/en/common.json";
import enHeats from "./locales/en/heats.json";
import enMethods from "./locales/en/methods.json";
import enProcess from "./locales/en/process.json";
import enReports from "./locales/en/reports.json";
import enSchema from "./locales/en/schema.json";
import enSlab from "./locales/en/slab.json";
import enServer from "./locales/en/server.json";
import enYard from "./locales/en/yard.json";
import type { Language } from "./languages";
import { pseudoCatalogue } from "./pseudo";

export const NAMESPACES = [
  "common",
  "yard",
  "review",
  "reports",
  "analysis",
  "heats",
  "claims",
  "process",
  "admin",
  "server",
  "schema",
  "slab",
  "methods",
  "audit",
] as const;
export type Namespace = (typeof NAMESPACES)[number];

type Tree = { [key: string]: string | Tree };
export type Catalogue = Record<Namespace, Tree>;

export const en: Catalogue = {
  common: enCommon,
  yard: enYard,
  review: enReview,
  reports: enReports,
  analysis: enAnalysis,
  heats: enHeats,
  claims: enClaims,
  process: enProcess,
  admin: enAdmin,
  server: enServer,
  schema: enSchema,
  slab: enSlab,
  methods: enMethods,
  audit: enAudit,
};

/** German: every key of the English catalogue (checked by tests/server/i18n.test.ts). */
export const de: Catalogue = {
  common: deCommon,
  yard: deYard,
  review: deReview,
  reports: deReports,
  analysis: deAnalysis,
  heats: deHeats,
  claims: deClaims,
  process: deProcess,
  admin: deAdmin,
  server: deServer,
  schema: deSchema,
  slab: deSlab,
  methods: deMethods,
  audit: deAudit,
};

export const resourcesFor = (language: Language): Catalogue => (language === "de" ? de : language === "en-XA" ? pseudo() : en);

let pseudoMade: Catalogue | null = null;
function pseudo(): Catalogue {
  pseudoMade ??= Object.fromEntries(NAMESPACES.map((ns) => [ns, pseudoCatalogue(en[ns])])) as Catalogue;
  return pseudoMade;
}
