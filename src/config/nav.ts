import { can, type Capability, type Role } from "@shared/roles";

export interface NavItem {
  to: string;
  label: string;
  capability: Capability;
  /** Pages below this path that other roles may open too (e.g. a heat page, reached from a slab). */
  subPathsOpen?: boolean;
}

/**
 * Every screen of the navigation, with the capability that opens it (shared/roles.ts). The order is
 * the menu's: each role's home comes first, then the records, then the tools that change data, then
 * administration.
 */
export const NAV_ITEMS: NavItem[] = [
  { to: "/yard", label: "Slab yard", capability: "defects.log" },
  { to: "/quality", label: "Quality", capability: "defects.review" },
  { to: "/quality/review", label: "Review", capability: "defects.review" },
  { to: "/quality/catalogue", label: "Catalogue", capability: "catalogue.manage" },
  { to: "/process", label: "Process", capability: "setup.manage" },
  { to: "/claims", label: "Claims", capability: "claims.read" },
  { to: "/trace", label: "Trace", capability: "claims.read" },
  { to: "/heats", label: "Heats", capability: "heats.browse", subPathsOpen: true },
  { to: "/reports", label: "Reports", capability: "reports.read" },
  { to: "/risk-models", label: "Risk models", capability: "risk.models.read" },
  { to: "/operating-windows", label: "Operating windows", capability: "windows.read" },
  { to: "/investigations", label: "Investigations", capability: "investigations.read" },
  { to: "/causes", label: "Cause tags", capability: "causes.read" },
  { to: "/import", label: "Import", capability: "imports.run" },
  { to: "/setup", label: "Plant setup", capability: "setup.manage" },
  { to: "/admin/users", label: "Users", capability: "users.manage" },
  { to: "/admin/sign-in", label: "Sign-in", capability: "users.manage" },
  { to: "/admin/tokens", label: "API tokens", capability: "tokens.manage" },
  { to: "/admin/outbox", label: "Mail outbox", capability: "outbox.read" },
];

export function navFor(roles: Role[]): NavItem[] {
  return NAV_ITEMS.filter((i) => can(roles, i.capability));
}

/** Where each role starts: the inspector goes straight to finding a slab. */
const HOME_BY_ROLE: [Role, string][] = [
  ["inspector", "/yard"],
  ["quality", "/quality"],
  ["process", "/process"],
  ["claims", "/claims"],
  ["admin", "/admin/users"],
];

export function homeFor(roles: Role[]): string {
  return HOME_BY_ROLE.find(([r]) => roles.includes(r))?.[1] ?? "/no-role";
}

/** Whether a path of the navigation is open to these roles (paths outside it are left to their screen). */
/** The `next` a sign-in page was given, when it is a screen of this app the person may open; else null. */
export function safeNext(next: string | null, roles: Role[]): string | null {
  return next && next.startsWith("/") && !next.startsWith("//") && next !== "/" && canOpen(roles, next.split("?")[0]!) ? next : null;
}

export function canOpen(roles: Role[], path: string): boolean {
  // The most specific item wins: /quality/catalogue is the catalogue's, not the Quality home's.
  const item = [...NAV_ITEMS].sort((a, b) => b.to.length - a.to.length).find((i) => path === i.to || (!i.subPathsOpen && path.startsWith(i.to + "/")));
  return !item || can(roles, item.capability);
}
