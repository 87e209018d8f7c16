import { z } from "zod";
import { plantSetupSchema, plantSummarySchema, slabHitSchema, slabSearchQuerySchema } from "@shared/api/plant";
import { defineRoute } from "../lib/route";
import { plantSetup, plantSummary, searchSlabs } from "../services/plant.service";
import type { Deps } from "./deps";

export function plantRoutes({ db }: Deps) {
  return [
    defineRoute({
      method: "get",
      path: "/slabs/search",
      summary: "Find slabs by the start of their id or their heat number (type-ahead and scanner input)",
      tag: "plant",
      access: "plant.read",
      query: slabSearchQuerySchema,
      responses: { 200: { description: "Matching slabs, exact match first.", schema: z.object({ slabs: z.array(slabHitSchema) }) } },
      handler: ({ query }) => ({ slabs: searchSlabs(db, query.q, query.limit) }),
    }),
    defineRoute({
      method: "get",
      path: "/plant/summary",
      summary: "Totals and the last 30 days of production on record",
      tag: "plant",
      access: "plant.read",
      responses: { 200: { description: "Summary.", schema: plantSummarySchema } },
      handler: () => plantSummary(db),
    }),
    defineRoute({
      method: "get",
      path: "/plant/setup",
      summary: "Casters and strands with their settings, grade families and grades",
      tag: "plant",
      access: "plant.read",
      responses: { 200: { description: "The plant setup.", schema: plantSetupSchema } },
      handler: () => plantSetup(db),
    }),
  ];
}
