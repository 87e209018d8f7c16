import { z } from "zod";
import { IMPORT_KINDS, type ImportKind } from "./imports";

// ---------------------------------------------------------------------------------------------
// API tokens of the level-2 feed (POST /api/ingest/<kind>)
// ---------------------------------------------------------------------------------------------

/** What a token may send: one scope per feed kind. */
export const TOKEN_SCOPES = IMPORT_KINDS;
export type TokenScope = ImportKind;
export const tokenScopeSchema = z.enum(TOKEN_SCOPES, { error: "A token may send heats, slabs, process-samples or products." });

/** A new token's scopes unless the admin chooses otherwise: the level-2 system's three kinds. */
export const DEFAULT_TOKEN_SCOPES: readonly TokenScope[] = ["heats", "slabs", "process-samples"];

export const TOKEN_SCOPE_LABELS: Record<TokenScope, string> = {
  heats: "Heats",
  slabs: "Slabs",
  "process-samples": "Process samples",
  products: "Products (the rolling mill's coils and plates)",
};

export const apiTokenSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  prefix: z.string(),
  /** The kinds it may send, in the order of TOKEN_SCOPES. */
  scopes: z.array(tokenScopeSchema),
  createdAt: z.string(),
  createdByName: z.string().nullable(),
  lastUsedAt: z.string().nullable(),
  revokedAt: z.string().nullable(),
});
export type ApiToken = z.infer<typeof apiTokenSchema>;

export const apiTokenCreateSchema = z.object({
  name: z.string().trim().min(1, "Name the system that will use the token.").max(80),
  scopes: z
    .array(tokenScopeSchema)
    .min(1, "Tick at least one kind of data the token may send.")
    .max(TOKEN_SCOPES.length * 2)
    .default([...DEFAULT_TOKEN_SCOPES])
    // One entry per kind, in the list's order, whatever order or repeats were sent.
    .transform((s) => TOKEN_SCOPES.filter((k) => s.includes(k))),
});
export type ApiTokenCreate = z.input<typeof apiTokenCreateSchema>;

/** The token itself appears only in this answer; it is stored hashed. */
export const apiTokenCreatedSchema = apiTokenSchema.extend({ token: z.string() });
