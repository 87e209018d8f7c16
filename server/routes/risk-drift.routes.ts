import { riskModelParamsSchema } from "@shared/api/risk";
import { riskDriftSchema } from "@shared/api/risk-drift";
import { defineRoute } from "../lib/route";
import { riskModelDrift } from "../services/risk/drift.service";
import type { Deps } from "./deps";

export function riskDriftRoutes({ db }: Deps) {
  return [
    defineRoute({
      method: "get",
      path: "/risk-models/:id/drift",
      summary:
        "A risk model version's drift, month by month on the judged slabs cast after its training: predicted against observed rate, calibration-in-the-large and AUC with their intervals, judged against plain thresholds (the method and thresholds are in the answer)",
      tag: "risk",
      access: "risk.models.read",
      params: riskModelParamsSchema,
      responses: {
        200: { description: "The months, oldest first.", schema: riskDriftSchema },
        404: { description: "No such version." },
        409: { description: "The version is still training or its training failed." },
      },
      handler: ({ params }) => riskModelDrift(db, params.id),
    }),
  ];
}
