/**
 * The app's screens: each address pattern and the route module that draws it
 * (`src/app/routes/<module>.tsx`). One list for both sides:
 * - the client's router is built from it (src/app/router.tsx);
 * - the server, when it answers a screen's address with index.html, names that screen's code in the
 *   page (`<link rel="modulepreload">`, server/lib/screen-preload.ts), so the browser fetches it while
 *   the app's first script is still loading instead of after it has run.
 *
 * Patterns are React Router's: static segments and `:param` segments, matched whole; "*" is every
 * address no other pattern takes.
 */
export interface Screen {
  /** Within the frame: relative to "/" ("" is the home screen). Outside it: absolute. */
  path: string;
  module: string;
  /** A report screen ("reports/<kind>"): its data come through the report loader, and it draws charts. */
  report?: boolean;
}

/** The report a report screen shows (its path's last part); null for any other screen. */
export const reportKindOf = (s: Screen): string | null => (s.report ? s.path.replace(/^reports\//, "") : null);

/** Outside the frame (no menu): signed out, or a first password still to be replaced. */
export const OUTSIDE_FRAME: readonly Screen[] = [
  { path: "/sign-in", module: "sign-in" },
  // Signed out on purpose: someone who forgot the password has no session.
  { path: "/forgot-password", module: "forgot-password" },
  { path: "/reset-password", module: "reset-password" },
  // While a first password set by an administrator is to be replaced, nothing else shows.
  { path: "/change-password", module: "change-password" },
];

/** The frame (menu, offline band, outbox) every other screen is drawn in. */
export const FRAME: Screen = { path: "/", module: "app-layout" };

export const IN_FRAME: readonly Screen[] = [
  { path: "", module: "home" },
  { path: "yard", module: "yard" },
  { path: "yard/slabs/:slabId", module: "yard-slab" },
  { path: "quality", module: "quality-home" },
  { path: "quality/review", module: "quality-review" },
  { path: "quality/catalogue", module: "quality-catalogue" },
  { path: "process", module: "process-home" },
  { path: "claims", module: "claims-home" },
  { path: "claims/new", module: "claim-new" },
  { path: "claims/:id", module: "claim" },
  { path: "trace", module: "trace" },
  { path: "heats", module: "heats" },
  { path: "heats/:heatNo", module: "heat" },
  { path: "heats/:heatNo/history", module: "heat-history" },
  { path: "slabs/:slabId", module: "slab" },
  { path: "reports", module: "reports" },
  { path: "reports/overview", module: "report-overview", report: true },
  { path: "reports/rate-by-variable", module: "report-rate-by-variable", report: true },
  { path: "reports/screening", module: "report-screening", report: true },
  { path: "reports/process-window", module: "report-process-window" },
  { path: "reports/control-chart", module: "report-control-chart", report: true },
  { path: "reports/before-after", module: "report-before-after" },
  { path: "reports/slab-positions", module: "report-slab-positions", report: true },
  { path: "reports/cause-pareto", module: "report-cause-pareto", report: true },
  { path: "reports/adjusted", module: "report-adjusted", report: true },
  { path: "risk-models", module: "risk-models" },
  { path: "operating-windows", module: "operating-windows" },
  { path: "causes", module: "causes" },
  { path: "causes/untagged", module: "causes-untagged" },
  { path: "investigations", module: "investigations" },
  { path: "investigations/new", module: "investigation-new" },
  { path: "investigations/:id", module: "investigation" },
  { path: "import", module: "import" },
  { path: "setup", module: "setup" },
  { path: "admin/users", module: "admin-users" },
  { path: "admin/sign-in", module: "admin-sign-in" },
  { path: "admin/tokens", module: "admin-tokens" },
  { path: "admin/outbox", module: "admin-outbox" },
  { path: "no-role", module: "no-role" },
  { path: "*", module: "not-found" },
];

const segments = (p: string) => p.split("/").filter(Boolean);

/** Does `pattern` (static and `:param` segments) take the whole of `pathname`? */
function matches(pattern: string, pathname: string): boolean {
  const want = segments(pattern);
  const got = segments(pathname);
  if (want.length !== got.length) return false;
  return want.every((w, i) => w.startsWith(":") || w === got[i]);
}

/**
 * The screen an address opens and whether it is inside the frame — as the router decides it: a
 * static segment outranks a `:param` in the same place (so "/claims/new" is not claim "new"), and
 * "*" takes what nothing else does. Trailing slashes do not count.
 */
export interface ScreenMatch {
  screen: Screen;
  inFrame: boolean;
}

export function screenFor(pathname: string): ScreenMatch {
  for (const s of OUTSIDE_FRAME) if (matches(s.path, pathname)) return { screen: s, inFrame: false };
  const candidates = IN_FRAME.filter((s) => s.path !== "*" && matches(s.path, pathname));
  // Fewer params first: the most specific pattern wins, as in React Router's ranking.
  candidates.sort((a, b) => segments(a.path).filter((x) => x.startsWith(":")).length - segments(b.path).filter((x) => x.startsWith(":")).length);
  return { screen: candidates[0] ?? IN_FRAME.find((s) => s.path === "*")!, inFrame: true };
}
