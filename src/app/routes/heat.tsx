import { lazy, Suspense, useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { Link, useParams, type LoaderFunctionArgs } from "react-router";
import { can } from "@shared/roles";
import { Button } from "@/components/ui/button";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { heatKeys } from "@/features/heats/api/heats.queries";
import { ChemistryTable, DerivedTable, HeatConditions, HeatFacts } from "@/features/heats/components/heat-sections";
import { HeatSlabsTable } from "@/features/heats/components/heat-slabs-table";
import { authKeys } from "@/features/auth/api/session";
import { HistoryWorkbookButton, PrintableHistoryLink } from "@/features/claims/components/history-actions";
import { BulkTagPanel, type BulkSelection } from "@/features/causes/components/bulk-tag-panel";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { defectKeys } from "@/features/defects/api/defects.queries";
import { investigationKeys } from "@/features/investigations/api/investigations.queries";
import { InvestigationsTable } from "@/features/investigations/components/investigations-table";
import { reportKeys } from "@/features/reports/api/reports.queries";
import { slabKeys } from "@/features/slabs/api/slabs.queries";
import type { HeatDetail } from "@shared/api/heats";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

// The chart library loads only here, after the heat's own figures are on screen.
const SamplesChart = lazy(() => import("@/features/heats/components/samples-chart"));

export function makeLoader(qc: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    await requireCapability(qc, "plant.read");
    const heatNo = params.heatNo ?? "";
    void qc.prefetchQuery(heatKeys.samples(heatNo));
    await qc.ensureQueryData(heatKeys.detail(heatNo));
    return null;
  };
}

function Samples({ heatNo }: { heatNo: string }) {
  const { t } = useTranslation("heats");
  const samples = useQuery(heatKeys.samples(heatNo));
  if (samples.isPending) return <Spinner label={t("heatPage.loadingSamples")} />;
  if (samples.isError) return <Notice tone="error">{samples.error.message}</Notice>;
  if (samples.data.strands.every((s) => s.points.length === 0)) {
    return <Notice>{t("heatPage.noSamples")}</Notice>;
  }
  return (
    <Suspense fallback={<Spinner label={t("heatPage.loadingChart")} />}>
      <SamplesChart samples={samples.data} />
    </Suspense>
  );
}

/** Tagging many defects at once: this heat's, or its whole sequence's. */
function BulkTagging({ heat }: { heat: HeatDetail }) {
  const { t } = useTranslation("heats");
  const [scope, setScope] = useState<"heat" | "sequence" | null>(null);
  const catalogue = useQuery(catalogueKeys.list(false));
  const types = (catalogue.data?.types ?? []).map((x) => ({ code: x.code, name: x.name }));
  const selection: BulkSelection | null =
    scope === "heat"
      ? { kind: "heat", heatNo: heat.heatNo }
      : scope === "sequence" && heat.sequenceNo
        ? { kind: "sequence", sequenceNo: heat.sequenceNo }
        : null;
  return (
    <Card title={t("bulkTag.title")}>
      {!selection ? (
        <div className="flex flex-wrap items-center gap-2">
          <Button onClick={() => setScope("heat")} data-testid="bulk-tag-heat">
            {t("bulkTag.heat")}
          </Button>
          {heat.sequenceNo ? (
            <Button variant="secondary" onClick={() => setScope("sequence")} data-testid="bulk-tag-sequence">
              {t("bulkTag.sequence", { sequence: heat.sequenceNo })}
            </Button>
          ) : null}
          <p className="text-sm text-ink-600">{t("bulkTag.hint")}</p>
        </div>
      ) : (
        <div className="space-y-2">
          <h3 className="text-sm font-bold">
            {selection.kind === "heat"
              ? t("bulkTag.everyOfHeat", { heat: heat.heatNo })
              : heat.sequenceHeats
                ? t("bulkTag.everyOfSequence", { sequence: heat.sequenceNo, heats: heat.sequenceHeats })
                : t("bulkTag.everyOfSequenceSeveral", { sequence: heat.sequenceNo })}
          </h3>
          <BulkTagPanel
            key={scope}
            selection={selection}
            describe={
              selection.kind === "heat" ? t("bulkTag.describeHeat", { heat: heat.heatNo }) : t("bulkTag.describeSequence", { sequence: heat.sequenceNo })
            }
            defectTypes={types}
            affects={[heatKeys.all, slabKeys.all, defectKeys.all, reportKeys.all]}
            onClose={() => setScope(null)}
          />
          <Button variant="ghost" onClick={() => setScope(null)}>
            {t("bulkTag.done")}
          </Button>
        </div>
      )}
    </Card>
  );
}

function HeatInvestigations({ heatNo }: { heatNo: string }) {
  const { t } = useTranslation("heats");
  const list = useQuery(investigationKeys.list({ heatNo }));
  if (list.isPending) return <Spinner label={t("heatPage.loadingInvestigations")} />;
  if (list.isError) return <Notice tone="error">{list.error.message}</Notice>;
  return <InvestigationsTable items={list.data.items} empty={t("heatPage.noInvestigations")} />;
}

export function Component() {
  const { t } = useTranslation("heats");
  const { heatNo = "" } = useParams();
  const heat = useQuery(heatKeys.detail(heatNo));
  const me = useQuery(authKeys.me());
  if (heat.isPending) return <Spinner label={t("heatPage.loading")} />;
  if (heat.isError) return <Notice tone="error">{heat.error.message}</Notice>;
  const h = heat.data;
  const slabs = h.slabs.length;
  const affected = h.slabs.filter((s) => s.defects > 0).length;
  const roles = me.data?.roles ?? [];
  return (
    <div className="space-y-5">
      <PageHeader
        title={t("heatPage.title", { heat: h.heatNo })}
        subtitle={
          slabs === 0
            ? t("heatPage.subtitleNoSlabs", { grade: h.grade.code, family: h.grade.familyCode, caster: h.caster.code })
            : t("heatPage.subtitle", { count: slabs, affected, grade: h.grade.code, family: h.grade.familyCode, caster: h.caster.code })
        }
        actions={
          <div className="flex flex-wrap items-start gap-2">
            {can(roles, "investigations.manage") ? (
              <Link
                to={`/investigations/new?heat=${encodeURIComponent(h.heatNo)}`}
                className="flex min-h-11 items-center rounded-md bg-strand-700 px-4 text-sm font-semibold text-white hover:bg-strand-800"
                data-testid="open-investigation-heat"
              >
                {t("heatPage.openInvestigation")}
              </Link>
            ) : null}
            {can(roles, "history.export") ? (
              <>
                <HistoryWorkbookButton heatNo={h.heatNo} label={t("heatPage.historyWorkbook")} testId="heat-history-xlsx" />
                <PrintableHistoryLink heatNo={h.heatNo} testId="heat-history-print" />
              </>
            ) : null}
            {can(roles, "heats.browse") ? (
              <Link
                to="/heats"
                className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50"
              >
                {t("heatPage.allHeats")}
              </Link>
            ) : null}
          </div>
        }
      />
      <Card>
        <HeatFacts heat={h} />
      </Card>
      <div className="grid gap-5 xl:grid-cols-2">
        <Card title={t("heatPage.conditionsTitle")}>
          <HeatConditions heat={h} />
        </Card>
        <Card title={t("heatPage.derivedTitle")}>
          <DerivedTable derived={h.derived} />
        </Card>
      </div>
      <Card title={t("heatPage.chemistryTitle")}>
        <ChemistryTable chemistry={h.chemistry} />
      </Card>
      <Card title={t("heatPage.samplesTitle")}>
        <Samples heatNo={h.heatNo} />
      </Card>
      <Card title={t("heatPage.slabsTitle", { n: slabs })} bodyClassName="px-2 py-3 md:px-3 xl:p-4">
        <HeatSlabsTable slabs={h.slabs} />
      </Card>
      {can(roles, "causes.tag") && h.slabs.some((s) => s.defects > 0) ? <BulkTagging heat={h} /> : null}
      {can(roles, "investigations.read") ? (
        <Card title={t("heatPage.investigationsTitle")} bodyClassName="px-2 py-3 md:p-4">
          <HeatInvestigations heatNo={h.heatNo} />
        </Card>
      ) : null}
    </div>
  );
}

export const ErrorBoundary = RouteError;
