import { z } from "zod";
import { heatDetailSchema, heatListQuerySchema, heatListSchema, heatSamplesQuerySchema, heatSamplesSchema, slabDetailSchema } from "@shared/api/heats";
import { can } from "@shared/roles";
import { defineRoute } from "../lib/route";
import { getHeat, getHeatSamples, getSlab, listHeats } from "../services/heats.service";
import type { Deps } from "./deps";

const heatParams = z.object({ heatNo: z.string().trim().min(1).max(40) });
const slabParams = z.object({ slabId: z.string().trim().min(1).max(40) });

export function heatRoutes({ db }: Deps) {
  return [
    defineRoute({
      method: "get",
      path: "/heats",
      summary: "Heats, paged, with search by heat, sequence or grade and a date range",
      tag: "heats",
      access: "heats.browse",
      query: heatListQuerySchema,
      responses: { 200: { description: "One page of heats.", schema: heatListSchema } },
      handler: ({ query }) => listHeats(db, query),
    }),
    defineRoute({
      method: "get",
      path: "/heats/:heatNo",
      summary: "A heat: chemistry, conditions, derived values and its slabs with their resolved conditions",
      tag: "heats",
      access: "plant.read",
      params: heatParams,
      responses: { 200: { description: "The heat.", schema: heatDetailSchema }, 404: { description: "No such heat." } },
      handler: ({ params }) => getHeat(db, params.heatNo),
    }),
    defineRoute({
      method: "get",
      path: "/heats/:heatNo/samples",
      summary: "The heat's process samples per strand, thinned for a chart",
      tag: "heats",
      access: "plant.read",
      params: heatParams,
      query: heatSamplesQuerySchema,
      responses: { 200: { description: "Samples.", schema: heatSamplesSchema }, 404: { description: "No such heat." } },
      handler: ({ params, query }) => getHeatSamples(db, params.heatNo, query.maxPoints),
    }),
    defineRoute({
      method: "get",
      path: "/slabs/:slabId",
      summary: "A slab with its heat, its resolved conditions (with the source of each) and its defects",
      tag: "heats",
      access: "plant.read",
      params: slabParams,
      responses: { 200: { description: "The slab.", schema: slabDetailSchema }, 404: { description: "No such slab." } },
      handler: ({ params, user }) => getSlab(db, params.slabId, can(user.roles, "causes.read")),
    }),
  ];
}
