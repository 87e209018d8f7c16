import {
  RISK_CAUTION,
  riskModelListSchema,
  riskModelParamsSchema,
  riskModelSchema,
  riskSlabsQuerySchema,
  riskSlabsSchema,
  trainRiskModelSchema,
} from "@shared/api/risk";
import { defineRoute } from "../lib/route";
import { activateRiskModel, getRiskModel, listRiskModels, riskSlabs, trainRiskModelVersion } from "../services/risk/risk.service";
import type { Deps } from "./deps";

export function riskRoutes({ db, logger }: Deps) {
  return [
    defineRoute({
      method: "post",
      path: "/risk-models",
      summary:
        "Train a new version of a slab risk model (penalised logistic regression, validated on the newest slabs); answers when training has finished, with the version and its validation",
      tag: "risk",
      access: "risk.train",
      body: trainRiskModelSchema,
      responses: {
        201: { description: "The trained version (not yet switched on).", schema: riskModelSchema },
        409: { description: "Another model is training." },
        422: { description: "Too few judged or affected slabs in the window." },
      },
      handler: async ({ body, user, res }) => {
        const model = await trainRiskModelVersion(db, body, user, { logger });
        res.status(201);
        return model;
      },
    }),
    defineRoute({
      method: "get",
      path: "/risk-models",
      summary: "Every risk model version, with its progress while training and its validation once trained",
      tag: "risk",
      access: "risk.models.read",
      responses: { 200: { description: "The versions.", schema: riskModelListSchema } },
      handler: () => listRiskModels(db),
    }),
    defineRoute({
      method: "get",
      path: "/risk-models/:id",
      summary: "One risk model version: terms and coefficients, validation, bands",
      tag: "risk",
      access: "risk.models.read",
      params: riskModelParamsSchema,
      responses: { 200: { description: "The version.", schema: riskModelSchema }, 404: { description: "No such version." } },
      handler: ({ params }) => getRiskModel(db, params.id),
    }),
    defineRoute({
      method: "post",
      path: "/risk-models/:id/activate",
      summary: "Switch a version on for its target (the one before goes off; audited); refused for a version that does not beat the grade-family baseline",
      tag: "risk",
      access: "risk.train",
      params: riskModelParamsSchema,
      responses: {
        200: { description: "Switched on; recent slabs scored.", schema: riskModelSchema },
        409: { description: "Not trained, or does not beat the baseline." },
      },
      handler: ({ params, user }) => activateRiskModel(db, params.id, user),
    }),
    defineRoute({
      method: "get",
      path: "/risk/slabs",
      summary: "Slabs ranked by risk under the active models, with the reasons in words (never a clearance: every slab is inspected)",
      tag: "risk",
      access: "risk.read",
      query: riskSlabsQuerySchema,
      responses: { 200: { description: "The slabs, riskiest first.", schema: riskSlabsSchema } },
      handler: ({ query }) => ({ ...riskSlabs(db, query), caution: RISK_CAUTION }),
    }),
  ];
}
