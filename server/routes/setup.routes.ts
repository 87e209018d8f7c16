import { z } from "zod";
import {
  casterCreateSchema,
  gradeFamilyInputSchema,
  gradeFamilyUpdateSchema,
  gradeInputSchema,
  gradeUpdateSchema,
  plantSettingsSchema,
  strandUpdateSchema,
} from "@shared/api/heats";
import { strandSchema } from "@shared/api/plant";
import { defineRoute } from "../lib/route";
import { getPlantSettings } from "../services/settings.service";
import { createCaster, createGrade, createGradeFamily, updateGrade, updateGradeFamily, updatePlantSettings, updateStrand } from "../services/setup.service";
import type { Deps } from "./deps";

const codeParams = z.object({ code: z.string().trim().min(1).max(32) });
const recomputed = z.object({ slabsResolved: z.number().int() }).passthrough();

export function setupRoutes({ db }: Deps) {
  return [
    defineRoute({
      method: "get",
      path: "/plant/settings",
      summary: "Formula settings: liquidus coefficients, shell constants, densities, steel properties",
      tag: "setup",
      access: "plant.read",
      responses: { 200: { description: "The settings.", schema: plantSettingsSchema } },
      handler: () => getPlantSettings(db),
    }),
    defineRoute({
      method: "put",
      path: "/plant/settings",
      summary: "Change the formula settings; every computed value follows",
      tag: "setup",
      access: "setup.manage",
      body: plantSettingsSchema,
      responses: { 200: { description: "Saved, with the number of slabs recomputed.", schema: recomputed } },
      handler: ({ body, user }) => updatePlantSettings(db, body, user.id),
    }),
    defineRoute({
      method: "patch",
      path: "/plant/strands/:id",
      summary: "Change a strand's mold, SEN or brake settings; its slabs' derived values follow",
      tag: "setup",
      access: "setup.manage",
      params: z.object({ id: z.coerce.number().int().positive() }),
      body: strandUpdateSchema,
      responses: {
        200: { description: "Saved, with the strand as it is now.", schema: z.object({ strand: strandSchema, slabsResolved: z.number().int() }) },
        404: { description: "No such strand." },
      },
      handler: ({ params, body, user }) => updateStrand(db, params.id, body, user.id),
    }),
    defineRoute({
      method: "post",
      path: "/plant/casters",
      summary: "Add a caster with its strands",
      tag: "setup",
      access: "setup.manage",
      body: casterCreateSchema,
      responses: { 201: { description: "Created.", schema: z.object({ id: z.number(), code: z.string() }) }, 409: { description: "The code is taken." } },
      handler: ({ body, user }) => createCaster(db, body, user.id),
    }),
    defineRoute({
      method: "post",
      path: "/plant/grade-families",
      summary: "Add a grade family",
      tag: "setup",
      access: "setup.manage",
      body: gradeFamilyInputSchema,
      responses: {
        201: { description: "Created.", schema: z.object({ id: z.number(), code: z.string() }).passthrough() },
        409: { description: "The code is taken." },
      },
      handler: ({ body, user }) => createGradeFamily(db, body, user.id),
    }),
    defineRoute({
      method: "patch",
      path: "/plant/grade-families/:code",
      summary: "Rename or describe a grade family",
      tag: "setup",
      access: "setup.manage",
      params: codeParams,
      body: gradeFamilyUpdateSchema,
      responses: {
        200: { description: "Saved.", schema: z.object({ id: z.number(), code: z.string() }).passthrough() },
        404: { description: "No such family." },
      },
      handler: ({ params, body, user }) => updateGradeFamily(db, params.code, body, user.id),
    }),
    defineRoute({
      method: "post",
      path: "/plant/grades",
      summary: "Add a steel grade to a family",
      tag: "setup",
      access: "setup.manage",
      body: gradeInputSchema,
      responses: {
        201: { description: "Created.", schema: z.object({ id: z.number(), code: z.string() }).passthrough() },
        409: { description: "The code is taken." },
      },
      handler: ({ body, user }) => createGrade(db, body, user.id),
    }),
    defineRoute({
      method: "patch",
      path: "/plant/grades/:code",
      summary: "Rename a grade, move it to another family, or retire it (active = false)",
      tag: "setup",
      access: "setup.manage",
      params: codeParams,
      body: gradeUpdateSchema,
      responses: {
        200: { description: "Saved.", schema: z.object({ id: z.number(), code: z.string() }).passthrough() },
        404: { description: "No such grade." },
      },
      handler: ({ params, body, user }) => updateGrade(db, params.code, body, user.id),
    }),
  ];
}
