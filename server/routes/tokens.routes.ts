import { z } from "zod";
import { apiTokenCreatedSchema, apiTokenCreateSchema, apiTokenSchema } from "@shared/api/tokens";
import { defineRoute } from "../lib/route";
import { createToken, listTokens, revokeToken } from "../services/tokens.service";
import type { Deps } from "./deps";

export function tokenRoutes({ db }: Deps) {
  return [
    defineRoute({
      method: "get",
      path: "/admin/tokens",
      summary: "API tokens of the level-2 feed",
      tag: "admin",
      access: "tokens.manage",
      responses: { 200: { description: "All tokens (never the token itself).", schema: z.object({ tokens: z.array(apiTokenSchema) }) } },
      handler: () => ({ tokens: listTokens(db) }),
    }),
    defineRoute({
      method: "post",
      path: "/admin/tokens",
      summary: "Create an API token that may send the kinds in `scopes` (default heats, slabs, process-samples); the token is in this answer only",
      tag: "admin",
      access: "tokens.manage",
      body: apiTokenCreateSchema,
      responses: { 201: { description: "Created.", schema: apiTokenCreatedSchema }, 400: { description: "No name, or no kind ticked." } },
      handler: ({ body, user }) => createToken(db, body.name, body.scopes, user.id),
    }),
    defineRoute({
      method: "delete",
      path: "/admin/tokens/:id",
      summary: "Revoke an API token (it answers 401 from then on)",
      tag: "admin",
      access: "tokens.manage",
      params: z.object({ id: z.coerce.number().int().positive() }),
      responses: { 200: { description: "Revoked.", schema: apiTokenSchema }, 404: { description: "No such token." } },
      handler: ({ params, user }) => revokeToken(db, params.id, user.id),
    }),
  ];
}
