import type { Namespace } from "./resources";

/**
 * The catalogues a screen's texts come from, by its route module (shared/screens.ts). The router
 * fetches them beside the screen's code (src/i18n), and the server names them in the page it answers
 * for the screen's address (server/lib/screen-preload.ts), so the screen draws in one go; a catalogue
 * missing here still loads when its first text is asked for (the component waits for it).
 */
const SCREEN_TEXTS: Record<string, Namespace[]> = {
  yard: ["yard", "slab"],
  "yard-slab": ["yard", "slab"],
  // The queue's photo strip and type picker are the yard's; the catalogue editor's checks, the schema's.
  "quality-review": ["review", "yard"],
  "quality-catalogue": ["review", "schema"],
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
  // Both choose a defect type or category with the yard's words (defect-target-options).
  "risk-models": ["process", "yard"],
  "operating-windows": ["process", "yard"],
  causes: ["process"],
  "causes-untagged": ["process"],
  investigations: ["process"],
  "investigation-new": ["process"],
  investigation: ["process"],
  import: ["admin"],
  setup: ["admin", "yard"],
  "admin-users": ["admin", "schema"],
  "admin-sign-in": ["admin"],
  "admin-tokens": ["admin"],
  "admin-outbox": ["admin"],
  "change-password": ["admin"],
  "forgot-password": ["admin"],
  "reset-password": ["admin"],
};

/** A screen's catalogues (besides `common`, which the frame reads). */
export const textsOf = (module: string): Namespace[] => SCREEN_TEXTS[module] ?? (module.startsWith("report-") ? ["reports"] : []);
