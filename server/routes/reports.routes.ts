import { z } from "zod";
import {
  adjustedQuerySchema,
  adjustedSchema,
  beforeAfterQuerySchema,
  beforeAfterSchema,
  controlChartQuerySchema,
  controlChartSchema,
  overviewQuerySchema,
  overviewSchema,
  processWindowQuerySchema,
  processWindowSchema,
  rateByVariableQuerySchema,
  rateByVariableSchema,
  savedReportInputSchema,
  savedReportSchema,
  screeningQuerySchema,
  screeningSchema,
  slabPositionsQuerySchema,
  slabPositionsSchema,
} from "@shared/api/reports";
import { apiErrorSchema } from "@shared/api/common";
import { VARIABLES } from "@shared/variables";
import { causeParetoQuerySchema, causeParetoSchema } from "@shared/api/causes";
import { causePareto } from "../services/causes.service";
import { notFound, said } from "../lib/http-error";
import { requestLanguage } from "../lib/i18n";
import { recordAudit } from "../services/audit.service";
import { defineRoute, type AnyRoute, type ResponseSpec } from "../lib/route";
import { reportWorkbook } from "../services/report-export";
import { reportThreadOf } from "../services/report-cache";
import { adjustedModel } from "../services/reports/adjusted";
import { beforeAfter } from "../services/reports/before-after";
import { controlChart } from "../services/reports/control-chart";
import { overview } from "../services/reports/overview";
import { processWindow } from "../services/reports/process-window";
import { rateByVariable } from "../services/reports/rate-by-variable";
import { screening } from "../services/reports/screening";
import { slabPositions } from "../services/reports/slab-positions";
import type { Deps } from "./deps";

const XLSX = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet";

export function reportRoutes({ db }: Deps): AnyRoute[] {
  const kinds = [
    {
      kind: "overview",
      summary:
        "Overview: rates by period (optionally directly standardised to the grade-family mix of the filters), a Pareto of defect types, rates by grade and by strand",
      query: overviewQuerySchema,
      schema: overviewSchema,
      run: overview,
    },
    {
      kind: "rate-by-variable",
      summary: "Rate of affected slabs against one casting condition: bins with Wilson intervals, Spearman, logistic odds ratio, Mann–Whitney",
      query: rateByVariableQuerySchema,
      schema: rateByVariableSchema,
      run: rateByVariable,
    },
    {
      kind: "screening",
      summary: "Every variable ranked by its association with the defect (Welch t / chi-square, Benjamini–Hochberg adjusted)",
      query: screeningQuerySchema,
      schema: screeningSchema,
      run: screening,
    },
    {
      kind: "process-window",
      summary: "Rate over a grid of two variables, with the count in each cell",
      query: processWindowQuerySchema,
      schema: processWindowSchema,
      run: processWindow,
    },
    {
      kind: "control-chart",
      summary:
        "Control chart by day or week: p-chart, Laney p′ chart or u-chart (defects per slab); limits from a baseline period applied to later periods; Western Electric run rules; Laney σ_z for overdispersion; standardised rates beside",
      query: controlChartQuerySchema,
      schema: controlChartSchema,
      run: controlChart,
    },
    {
      kind: "before-after",
      summary:
        "Two periods, or two ranges of one variable: difference in rates with its interval and the Fisher or chi-square p; with stratifyBy, per-stratum comparisons, the Mantel–Haenszel odds ratio (B against A), Breslow–Day and the difference of directly standardised rates",
      query: beforeAfterQuerySchema,
      schema: beforeAfterSchema,
      run: beforeAfter,
    },
    {
      kind: "slab-positions",
      summary: "Where on the slab: defect counts by face, along the length and across the width",
      query: slabPositionsQuerySchema,
      schema: slabPositionsSchema,
      run: slabPositions,
    },
    {
      kind: "cause-pareto",
      summary: "Pareto of cause tags over the defects passing the filters (live taggings at or above a confidence)",
      query: causeParetoQuerySchema,
      schema: causeParetoSchema,
      run: causePareto,
    },
    {
      kind: "adjusted",
      summary:
        "Adjusted model: crude and adjusted odds ratios side by side for the conditions examined, adjusted for grade family, strand or any other term; heat-clustered SEs by default; a test and the GVIF per variable",
      query: adjustedQuerySchema,
      schema: adjustedSchema,
      run: adjustedModel,
    },
  ] as const;

  // The reports that read the in-memory slab facts (report-cache.ts): after a start, until those are
  // loaded, they answer 503 "warming up" with Retry-After (the screens wait and ask again by themselves).
  const warming: Record<number, ResponseSpec> = {
    503: {
      description: "Reports are warming up: the slab data are being loaded after a start (about N s). `Retry-After` says when to ask again.",
      schema: apiErrorSchema,
    },
  };
  const usesFacts = new Set<string>(["overview", "rate-by-variable", "screening", "process-window", "control-chart", "before-after", "adjusted"]);
  // Those run in the report thread linked to the connection (report-thread.ts), which owns the facts,
  // so the main thread keeps answering (and saving defects) meanwhile; without one (an in-memory
  // database) they run here. The result is the same object either way.
  const compute = (k: (typeof kinds)[number], query: unknown): unknown => {
    const thread = usesFacts.has(k.kind) ? reportThreadOf(db) : undefined;
    return thread ? thread.run(k.kind, query) : (k.run as (d: typeof db, q: unknown) => unknown)(db, query);
  };

  const routes: AnyRoute[] = [
    defineRoute({
      method: "get",
      path: "/reports/variables",
      summary: "The variables the reports take, with labels and units",
      tag: "reports",
      access: "reports.read",
      responses: {
        200: {
          description: "Variables.",
          schema: z.object({
            variables: z.array(z.object({ key: z.string(), label: z.string(), unit: z.string(), group: z.string(), description: z.string() })),
          }),
        },
      },
      handler: () => ({ variables: VARIABLES.map(({ key, label, unit, group, description }) => ({ key, label, unit, group, description })) }),
    }),
  ];
  for (const k of kinds) {
    routes.push(
      defineRoute({
        method: "get",
        path: `/reports/${k.kind}`,
        summary: k.summary,
        tag: "reports",
        access: "reports.read",
        query: k.query as z.ZodType,
        responses: { 200: { description: "The report.", schema: k.schema }, ...(usesFacts.has(k.kind) ? warming : {}) },
        handler: ({ query }) => compute(k, query),
      }),
      defineRoute({
        method: "get",
        path: `/reports/${k.kind}.xlsx`,
        summary: `${k.summary} — as an Excel workbook (the same numbers as the JSON for the same query)`,
        tag: "reports",
        access: "reports.read",
        query: k.query as z.ZodType,
        responses: { 200: { description: "The workbook.", contentType: XLSX }, ...(usesFacts.has(k.kind) ? warming : {}) },
        handler: async ({ query, req, res, user }) => {
          const result = await compute(k, query);
          const qs = req.originalUrl.includes("?") ? req.originalUrl.slice(req.originalUrl.indexOf("?") + 1) : "";
          const methods = (result as { methods?: Record<string, string> }).methods;
          const buf = await reportWorkbook(
            k.kind,
            qs,
            result,
            `${user.name} <${user.email}>`,
            methods ? Object.entries(methods).map(([a, b]) => `${a}: ${b}`) : [],
            requestLanguage(req),
          );
          res.setHeader("Content-Type", XLSX);
          res.setHeader("Content-Disposition", `attachment; filename="strandsight-${k.kind}-${new Date().toISOString().slice(0, 10)}.xlsx"`);
          res.send(buf);
        },
      }),
    );
  }
  routes.push(
    defineRoute({
      method: "get",
      path: "/saved-reports",
      summary: "The signed-in user's saved reports",
      tag: "reports",
      access: "reports.read",
      responses: { 200: { description: "Saved reports.", schema: z.object({ reports: z.array(savedReportSchema) }) } },
      handler: ({ user }) => ({
        reports: (
          db.$client
            .prepare("select id, name, report_kind as reportKind, query, created_at as createdAt from saved_reports where user_id = ? order by name")
            .all(user.id) as Record<string, any>[]
        ).map((r) => ({ ...r, createdAt: new Date(r.createdAt).toISOString() })),
      }),
    }),
    defineRoute({
      method: "post",
      path: "/saved-reports",
      summary: "Save a report (its kind and query string) under a name",
      tag: "reports",
      access: "reports.read",
      body: savedReportInputSchema,
      responses: { 201: { description: "Saved.", schema: savedReportSchema } },
      handler: ({ body, user }) => {
        const now = Date.now();
        const id = db.transaction(() => {
          const newId = Number(
            db.$client
              .prepare("insert into saved_reports (user_id, name, report_kind, query, created_at, updated_at) values (?, ?, ?, ?, ?, ?)")
              .run(user.id, body.name, body.reportKind, body.query.replace(/^\?/, ""), now, now).lastInsertRowid,
          );
          recordAudit(db, { userId: user.id, action: "saved_report.create", entity: "saved_report", entityId: newId, after: body });
          return newId;
        });
        return { id, name: body.name, reportKind: body.reportKind, query: body.query.replace(/^\?/, ""), createdAt: new Date(now).toISOString() };
      },
    }),
    defineRoute({
      method: "delete",
      path: "/saved-reports/:id",
      summary: "Delete one of your saved reports",
      tag: "reports",
      access: "reports.read",
      params: z.object({ id: z.coerce.number().int().positive() }),
      responses: {
        200: { description: "Deleted.", schema: z.object({ id: z.number(), deleted: z.literal(true) }) },
        404: { description: "Not one of yours." },
      },
      handler: ({ params, user }) => {
        db.transaction(() => {
          const before = db.$client.prepare("select name, report_kind, query from saved_reports where id = ? and user_id = ?").get(params.id, user.id);
          if (!before) throw notFound(said("reports.noSavedReport"));
          db.$client.prepare("delete from saved_reports where id = ? and user_id = ?").run(params.id, user.id);
          recordAudit(db, { userId: user.id, action: "saved_report.delete", entity: "saved_report", entityId: params.id, before });
        });
        return { id: params.id, deleted: true as const };
      },
    }),
  );
  return routes;
}
