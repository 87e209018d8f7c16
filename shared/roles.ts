import { z } from "zod";

/** The five roles of the product; a user may hold several. */
export const ROLES = ["inspector", "quality", "process", "claims", "admin"] as const;
export const roleSchema = z.enum(ROLES);
export type Role = z.infer<typeof roleSchema>;

export const ROLE_LABELS: Record<Role, string> = {
  inspector: "Slab-yard inspector",
  quality: "Quality engineer",
  process: "Process engineer",
  claims: "Customer-claims officer",
  admin: "Administrator",
};

/**
 * What each role may do. The server's require-role middleware and the client's navigation both read
 * this one table, so what the menu offers and what the API allows cannot drift apart.
 */
export const CAPABILITIES = {
  /** Read plant data: slabs, heats, the catalogue. Every signed-in role. */
  "plant.read": ["inspector", "quality", "process", "claims", "admin"],
  /** The heats list: the office roles; inspectors reach heats through their slabs. */
  "heats.browse": ["quality", "process", "claims", "admin"],
  "defects.log": ["inspector", "quality", "admin"],
  "defects.review": ["quality", "admin"],
  "catalogue.manage": ["quality", "admin"],
  "reports.read": ["quality", "process", "claims", "admin"],
  /** Train risk models and switch them on. */
  "risk.train": ["quality", "admin"],
  /** Read risk models' versions and validation. */
  "risk.models.read": ["quality", "process", "admin"],
  /** Read slabs' risks (the inspector's check-first list included). */
  "risk.read": ["inspector", "quality", "process", "claims", "admin"],
  /** Write, change and retire operating window rules. */
  "windows.manage": ["process", "admin"],
  /** Read operating window rules and their records on history (each slab's flags need only plant.read). */
  "windows.read": ["quality", "process", "admin"],
  "imports.run": ["process", "admin"],
  "setup.manage": ["process", "admin"],
  "causes.tag": ["process", "admin"],
  "causes.read": ["quality", "process", "claims", "admin"],
  "investigations.manage": ["process", "admin"],
  "investigations.read": ["quality", "process", "claims", "admin"],
  "claims.manage": ["claims", "admin"],
  "claims.read": ["claims", "quality", "admin"],
  "history.export": ["claims", "quality", "admin"],
  "users.manage": ["admin"],
  "tokens.manage": ["admin"],
  "outbox.read": ["admin"],
} as const satisfies Record<string, readonly Role[]>;

export type Capability = keyof typeof CAPABILITIES;

export function can(roles: readonly Role[] | undefined, capability: Capability): boolean {
  if (!roles) return false;
  const allowed: readonly Role[] = CAPABILITIES[capability];
  return roles.some((r) => allowed.includes(r));
}

/** Parses the comma-separated role column; unknown names are dropped. */
export function parseRoles(stored: string | null | undefined): Role[] {
  if (!stored) return [];
  const out: Role[] = [];
  for (const part of stored.split(",")) {
    const r = part.trim();
    if ((ROLES as readonly string[]).includes(r) && !out.includes(r as Role)) out.push(r as Role);
  }
  return out;
}
