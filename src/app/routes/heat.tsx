import { lazy, Suspense } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Link, useParams, type LoaderFunctionArgs } from "react-router";
import { can } from "@shared/roles";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { heatKeys } from "@/features/heats/api/heats.queries";
import { ChemistryTable, DerivedTable, HeatConditions, HeatFacts } from "@/features/heats/components/heat-sections";
import { HeatSlabsTable } from "@/features/heats/components/heat-slabs-table";
import { authKeys } from "@/features/auth/api/session";
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
  const samples = useQuery(heatKeys.samples(heatNo));
  if (samples.isPending) return <Spinner label="Loading process samples" />;
  if (samples.isError) return <Notice tone="error">{samples.error.message}</Notice>;
  if (samples.data.strands.every((s) => s.points.length === 0)) {
    return <Notice>No process samples on record for this heat: its slabs take the heat's values (or their own, where given).</Notice>;
  }
  return (
    <Suspense fallback={<Spinner label="Loading the chart" />}>
      <SamplesChart samples={samples.data} />
    </Suspense>
  );
}

export function Component() {
  const { heatNo = "" } = useParams();
  const heat = useQuery(heatKeys.detail(heatNo));
  const me = useQuery(authKeys.me());
  if (heat.isPending) return <Spinner label="Loading the heat" />;
  if (heat.isError) return <Notice tone="error">{heat.error.message}</Notice>;
  const h = heat.data;
  const slabs = h.slabs.length;
  const affected = h.slabs.filter((s) => s.defects > 0).length;
  return (
    <div className="space-y-5">
      <PageHeader
        title={`Heat ${h.heatNo}`}
        subtitle={`${h.grade.code} (${h.grade.familyCode}) on ${h.caster.code} · ${
          slabs === 0 ? "no slabs on record yet" : `${slabs} slab${slabs === 1 ? "" : "s"}, ${affected} of them with a defect`
        }`}
        actions={
          me.data && can(me.data.roles, "heats.browse") ? (
            <Link to="/heats" className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-4 text-sm font-semibold text-ink-900 hover:bg-ink-50">
              All heats
            </Link>
          ) : null
        }
      />
      <Card>
        <HeatFacts heat={h} />
      </Card>
      <div className="grid gap-5 xl:grid-cols-2">
        <Card title="Casting conditions (heat values)">
          <HeatConditions heat={h} />
        </Card>
        <Card title="Derived values at the heat's conditions">
          <DerivedTable derived={h.derived} />
        </Card>
      </div>
      <Card title="Chemistry (heat analysis)">
        <ChemistryTable chemistry={h.chemistry} />
      </Card>
      <Card title="Process samples">
        <Samples heatNo={h.heatNo} />
      </Card>
      <Card title={`Slabs (${slabs})`} bodyClassName="px-2 py-3 md:px-3 xl:p-4">
        <HeatSlabsTable slabs={h.slabs} />
      </Card>
    </div>
  );
}

export const ErrorBoundary = RouteError;
