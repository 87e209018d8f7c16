import { z } from "zod";
import {
  bulkTagResultSchema,
  bulkTagSchema,
  causeTagCreateSchema,
  causeTagQuerySchema,
  causeTagSchema,
  causeTagUpdateSchema,
  causeTaxonomySchema,
  defectCausesSchema,
  tagDefectSchema,
  untagSchema,
} from "@shared/api/causes";
import { defineRoute, type AnyRoute } from "../lib/route";
import { bulkTag, createTag, defectCauses, deleteTag, listTaxonomy, tagDefect, untagDefect, updateTag } from "../services/causes.service";
import type { Deps } from "./deps";

const codeParams = z.object({ code: z.string().trim().min(1).max(40) });
const defectParams = z.object({ id: z.coerce.number().int().positive() });
const linkParams = defectParams.extend({ linkId: z.coerce.number().int().positive() });

export function causeRoutes({ db }: Deps): AnyRoute[] {
  return [
    defineRoute({
      method: "get",
      path: "/cause-tags",
      summary: "The cause taxonomy: groups and their tags (each with its code); includeRetired=true lists retired tags too",
      tag: "causes",
      access: "causes.read",
      query: causeTagQuerySchema,
      responses: { 200: { description: "The taxonomy.", schema: causeTaxonomySchema } },
      handler: ({ query }) => listTaxonomy(db, query.includeRetired === "true"),
    }),
    defineRoute({
      method: "post",
      path: "/cause-tags",
      summary: "Add a cause tag to a group",
      tag: "causes",
      access: "causes.tag",
      body: causeTagCreateSchema,
      status: 201,
      responses: { 201: { description: "Added.", schema: causeTagSchema }, 409: { description: "The code is taken." } },
      handler: ({ body, user }) => createTag(db, user, body),
    }),
    defineRoute({
      method: "patch",
      path: "/cause-tags/:code",
      summary: "Rename, regroup, describe, retire (retired: true) or reinstate a cause tag",
      tag: "causes",
      access: "causes.tag",
      params: codeParams,
      body: causeTagUpdateSchema,
      responses: { 200: { description: "Changed.", schema: causeTagSchema } },
      handler: ({ params, body, user }) => updateTag(db, user, params.code, body),
    }),
    defineRoute({
      method: "delete",
      path: "/cause-tags/:code",
      summary: "Delete a cause tag that was never used (a used one can only be retired)",
      tag: "causes",
      access: "causes.tag",
      params: codeParams,
      responses: {
        200: { description: "Deleted.", schema: z.object({ code: z.string(), deleted: z.literal(true) }) },
        409: { description: "The tag has been used: retire it." },
      },
      handler: ({ params, user }) => {
        deleteTag(db, user, params.code);
        return { code: params.code, deleted: true as const };
      },
    }),
    defineRoute({
      method: "get",
      path: "/defects/:id/causes",
      summary: "A defect's live cause taggings and its full tagging history (removed ones included)",
      tag: "causes",
      access: "causes.read",
      params: defectParams,
      responses: { 200: { description: "The causes.", schema: defectCausesSchema } },
      handler: ({ params }) => defectCauses(db, params.id),
    }),
    defineRoute({
      method: "post",
      path: "/defects/:id/causes",
      summary: "Tag a defect with one or several causes, each with a confidence and a note",
      tag: "causes",
      access: "causes.tag",
      params: defectParams,
      body: tagDefectSchema,
      status: 201,
      responses: { 201: { description: "Tagged; the defect's causes.", schema: defectCausesSchema } },
      handler: ({ params, body, user }) => tagDefect(db, user, params.id, body),
    }),
    defineRoute({
      method: "delete",
      path: "/defects/:id/causes/:linkId",
      summary: "Remove a cause tagging from a defect (kept in the history, audited, with an optional reason)",
      tag: "causes",
      access: "causes.tag",
      params: linkParams,
      body: untagSchema,
      responses: { 200: { description: "Removed; the defect's causes.", schema: defectCausesSchema } },
      handler: ({ params, body, user }) => untagDefect(db, user, params.id, params.linkId, body.reason),
    }),
    defineRoute({
      method: "post",
      path: "/causes/bulk",
      summary: "Tag every defect of a heat, a sequence, a report filter's result or a list with the same causes (dryRun: count only)",
      tag: "causes",
      access: "causes.tag",
      body: bulkTagSchema,
      status: 201,
      responses: { 201: { description: "Tagged (200 with dryRun).", schema: bulkTagResultSchema } },
      handler: ({ body, user, res }) => {
        res.status(body.dryRun ? 200 : 201).json(bulkTag(db, user, body));
      },
    }),
  ];
}
